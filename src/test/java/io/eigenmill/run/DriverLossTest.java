package io.eigenmill.run;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.cli.Main;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.kmeans.Summaries;
import io.eigenmill.testing.FleetTables;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SharedCluster;
import io.eigenmill.testing.SparkSuite;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.PrintStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.Optional;
import java.util.Set;
import java.util.stream.Stream;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.extension.ExtendWith;

/**
 * The driver JVM killed (SIGKILL) while it writes the outputs: the job's tables are half written into the hidden
 * staging folder beside {@code output.path}, and nothing of them reaches {@code output.path}: a previous complete
 * result there is left exactly as it was. The cluster gives the dead driver's executors back, and a rerun succeeds.
 */
@Tag("cluster")
@ExtendWith(SharedCluster.class)
class DriverLossTest extends SparkSuite {
  private static final int ROWS = 6_000;
  private static final String REFERENCE = "the local[2] run of the same job in this JVM (Main.run)";

  private static Path dir;
  private static Path job;

  @BeforeAll
  static void fleetTable() throws IOException {
    dir = Files.createTempDirectory("eigenmill-driver-loss-");
    Path table = dir.resolve("fleet");
    FleetTables.write(spark, table, ROWS, 24, 31);
    job = FleetTables.fitJob(dir, table, "reduce.components = 3", "output.scores = true", "output.mode = overwrite");
  }

  @AfterAll
  static void cleanUp() {
    LoopbackCluster.deleteTree(dir);
  }

  @Test
  void aDriverKilledWhileWritingLeavesThePreviousResultAndARerunSucceeds(LoopbackCluster cluster)
      throws Exception {
    Path out = dir.resolve("fleet-model");
    ByteArrayOutputStream err = new ByteArrayOutputStream();
    int localExit = Main.run(new String[] {"run", job.toString(), "--set", "output.path=\"" + out + "\""},
        new PrintStream(new ByteArrayOutputStream(), true, StandardCharsets.UTF_8),
        new PrintStream(err, true, StandardCharsets.UTF_8));
    assertEquals(0, localExit, "the previous, complete result: " + err.toString(StandardCharsets.UTF_8));
    byte[] summaryBefore = Files.readAllBytes(out.resolve("summary.json"));
    Set<String> entriesBefore = Summaries.entries(out);

    Path staging;
    String app;
    try (LoopbackCluster.Submission run = cluster.submit("driver-loss",
        List.of(job.toString(), "--set", "output.path=\"" + out + "\""))) {
      assertTrue(LoopbackCluster.poll(Duration.ofSeconds(300), () -> writingTables(out).isPresent()
          || !run.driver().isAlive()), "the driver starts writing model/ or scores/ into its staging folder");
      assertTrue(run.driver().isAlive(), "the driver is still running:\n" + run.stderr());
      staging = writingTables(out).orElseThrow();
      app = run.appId().orElseThrow();
      run.kill();
    }
    assertArrayEquals(summaryBefore, Files.readAllBytes(out.resolve("summary.json")),
        "summary.json of the previous complete result is untouched");
    assertEquals(entriesBefore, Summaries.entries(out), "the previous result's tables are all there, none added");
    assertTrue(Files.exists(out.resolve(OutputCommit.MARKER)), "the previous result keeps its commit marker");
    assertFalse(Files.exists(staging.resolve(OutputCommit.MARKER)),
        "the killed run's staging folder " + staging + " was never marked complete");
    try (Stream<Path> siblings = Files.list(dir)) {
      assertTrue(siblings.noneMatch(p -> p.getFileName().toString().startsWith("." + out.getFileName()
          + ".replaced-")), "the killed run never began to swap folders");
    }
    assertTrue(LoopbackCluster.poll(Duration.ofSeconds(60), () -> cluster.executors(app).isEmpty()),
        "the workers stop the dead driver's executors: " + cluster.executors(app));

    int exit;
    String stderr;
    try (LoopbackCluster.Submission rerun = cluster.submit("driver-loss-rerun",
        List.of(job.toString(), "--set", "output.path=\"" + out + "\""))) {
      exit = rerun.awaitExit(Duration.ofSeconds(300));
      stderr = rerun.stderr();
    }
    assertEquals(0, exit, "the rerun succeeds:\n" + stderr);
    assertTrue(Files.exists(out.resolve(OutputCommit.MARKER)), "the rerun's output is complete");
    assertEquals(entriesBefore, Summaries.entries(out), "the rerun writes the same tables");
    Summaries.assertSameFit(Summaries.parse(summaryBefore), Summaries.read(out), REFERENCE);
  }

  /** The killed run's staging folder once it holds {@code model/} or {@code scores/}. */
  private static Optional<Path> writingTables(Path out) {
    String prefix = "." + out.getFileName() + ".staging-";
    try (Stream<Path> siblings = Files.list(out.getParent())) {
      return siblings.filter(p -> p.getFileName().toString().startsWith(prefix))
          .filter(p -> Files.exists(p.resolve("model")) || Files.exists(p.resolve("scores")))
          .findFirst();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
