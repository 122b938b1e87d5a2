package io.eigenmill.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.kmeans.Summaries;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.FleetTables;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SharedCluster;
import io.eigenmill.testing.SparkSuite;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.List;
import java.util.UUID;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;

/**
 * A fit submitted to the loopback cluster (master, two workers, executors and the driver each in its own JVM) gives
 * the numbers and the tables of the same job run in local mode in this JVM; and secrets passed on its command line
 * appear nowhere: not in the driver's output, the executors' or daemons' logs, the plan, or the written files.
 */
@Tag("cluster")
@ExtendWith(SharedCluster.class)
class LoopbackClusterSubmitTest extends SparkSuite {
  private static final int ROWS = 4000;
  private static final String REFERENCE = "the local[2] run of the same job in this JVM (Main.run)";

  private static Path dir;
  private static Path job;
  private static Path clusterOut;
  private static Path localOut;
  private static String secretKey;
  private static String accessKey;
  private static List<String> secretSets;
  private static LoopbackCluster.Submission submitted;
  private static int clusterExit;
  private static CommandRun local;
  private static LoopbackCluster cluster;

  @BeforeAll
  static void runOnTheClusterAndLocally(LoopbackCluster c) throws Exception {
    cluster = c;
    dir = Files.createTempDirectory("eigenmill-cluster-run-");
    Path table = dir.resolve("fleet");
    FleetTables.write(spark, table, ROWS, 8, 11);
    job = FleetTables.fitJob(dir, table, "reduce.components = 4", "output.scores = true");
    clusterOut = dir.resolve("out-cluster");
    localOut = dir.resolve("out-local");
    secretKey = "sk-" + UUID.randomUUID();
    accessKey = "AK" + UUID.randomUUID().toString().replace("-", "").toUpperCase(java.util.Locale.ROOT);
    secretSets = List.of("--set", "spark.conf.\"spark.hadoop.fs.s3a.secret.key\"=\"" + secretKey + "\"",
        "--set", "spark.conf.\"spark.hadoop.fs.s3a.access.key\"=" + accessKey);
    submitted = c.submit("cluster-run", with(List.of(job.toString(), "--set",
        "output.path=\"" + clusterOut + "\""), secretSets));
    try {
      local = CommandRun.of(with(List.of("run", job.toString(), "--env",
          c.repo().resolve("conf/local.conf").toString(), "--set", "output.path=\"" + localOut + "\""), secretSets));
      clusterExit = submitted.awaitExit(Duration.ofSeconds(300));
    } finally {
      submitted.close();
    }
  }

  @AfterAll
  static void cleanUp() {
    LoopbackCluster.deleteTree(dir);
  }

  private static List<String> with(List<String> first, List<String> more) {
    List<String> all = new ArrayList<>(first);
    all.addAll(more);
    return all;
  }

  @Test
  void theSubmittedFitHasTheNumbersOfTheLocalFit() {
    assertEquals(0, local.code(), "local run: " + local.err());
    assertEquals(0, clusterExit, "cluster run (exit code of spark-submit's driver JVM):\n" + submitted.stderr());
    assertTrue(submitted.stdout().contains("fit: 4,000 rows (0 dropped), 10 features"),
        "the driver prints the outcome:\n" + submitted.stdout());
    JsonNode expected = Summaries.read(localOut);
    JsonNode actual = Summaries.read(clusterOut);
    assertEquals(ROWS, actual.get("rows").asLong(), "rows: the table written by this test has " + ROWS);
    Summaries.assertSameFit(expected, actual, REFERENCE);
  }

  @Test
  void theSubmittedFitWritesTheSameTables() {
    assertEquals(0, clusterExit, submitted.stderr());
    assertEquals(Summaries.entries(localOut), Summaries.entries(clusterOut), "output entries, against " + REFERENCE);
    assertTrue(Files.exists(clusterOut.resolve(OutputCommit.MARKER)), "the commit marker of a complete output");
    for (String table : List.of("components", "spectrum", "model", "scores")) {
      long expected = spark.read().parquet(localOut.resolve(table).toString()).count();
      long actual = spark.read().parquet(clusterOut.resolve(table).toString()).count();
      assertEquals(expected, actual, "rows of " + table + "/, against " + REFERENCE);
    }
    assertEquals(ROWS, spark.read().parquet(clusterOut.resolve("scores").toString()).count(),
        "scores/ has one row per input row");
  }

  @Test
  void secretsOnTheCommandLineAppearInNoLogAndNoFile() throws IOException {
    assertEquals(0, clusterExit, submitted.stderr());
    List<Path> searched = new ArrayList<>(submitted.files());
    List<Path> executorLogs = submitted.executorLogs();
    assertFalse(executorLogs.isEmpty(), "the executors' stdout/stderr under the workers' work dirs were found");
    searched.addAll(executorLogs);
    searched.addAll(cluster.daemonLogs());
    try (Stream<Path> files = Files.walk(clusterOut)) {
      files.filter(Files::isRegularFile).forEach(searched::add);
    }
    try (Stream<Path> files = Files.walk(localOut)) {
      files.filter(Files::isRegularFile).forEach(searched::add);
    }
    for (Path f : searched) {
      String text = new String(Files.readAllBytes(f), StandardCharsets.ISO_8859_1);
      assertFalse(text.contains(secretKey), "the secret key's value appears in " + f);
      assertFalse(text.contains(accessKey), "the access key's value appears in " + f);
    }
    for (String printed : List.of(local.out(), local.err())) {
      assertFalse(printed.contains(secretKey) || printed.contains(accessKey), "the local run printed a secret");
    }
  }

  @Test
  void thePlanShowsSecretKeysWithTheirValuesMasked() {
    CommandRun plan = CommandRun.of(with(List.of("plan", job.toString(), "--set", "output.path=\""
        + dir.resolve("never") + "\""), secretSets));
    assertEquals(0, plan.code(), plan.err());
    assertTrue(plan.out().contains("spark.hadoop.fs.s3a.secret.key = " + Redaction.MASK), plan.out());
    assertTrue(plan.out().contains("spark.hadoop.fs.s3a.access.key = " + Redaction.MASK), plan.out());
    assertTrue(plan.out().contains("spark.sql.files.openCostInBytes = 134217728"),
        "settings that are not secret are shown as they are:\n" + plan.out());
    assertFalse(plan.out().contains(secretKey) || plan.out().contains(accessKey), plan.out());
  }
}
