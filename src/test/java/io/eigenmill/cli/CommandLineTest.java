package io.eigenmill.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.spark.OutputCommit;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.SparkSuite;
import java.io.File;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The command line end to end: in this JVM through {@link Main#run} (the same entry point as the script, sharing the
 * test's Spark session), and in a separate JVM for exit codes and logging.
 */
class CommandLineTest extends SparkSuite {
  private static Path dir;
  private static Path table;

  @BeforeAll
  static void fleetTable() throws Exception {
    dir = Files.createTempDirectory("eigenmill-cli");
    table = dir.resolve("fleet");
    StructType schema = new StructType().add("host", DataTypes.StringType).add("region", DataTypes.StringType)
        .add("cpu_user_pct", DataTypes.DoubleType).add("cpu_system_pct", DataTypes.DoubleType)
        .add("mem_used_pct", DataTypes.DoubleType).add("fan1_rpm", DataTypes.IntegerType)
        .add("temp_inlet_c", DataTypes.DoubleType).add("net_rx_gbps", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < 400; i++) {
      double load = Math.sin(i * 0.1) * 20 + 50;
      rows.add(RowFactory.create("edge-" + (i % 20), i % 2 == 0 ? "north" : "south", load + (i % 7),
          load / 3 + (i % 5), 40.0 + (i % 11), 4000 + (int) (load * 10) + (i % 13), 21 + (i % 3) * 0.5,
          load / 10 + (i % 4) * 0.1));
    }
    spark.createDataFrame(rows, schema).repartition(3).write().parquet(table.toString());
  }

  private static Path job(String name, String body) throws Exception {
    Path f = dir.resolve(name + ".conf");
    Files.writeString(f, "input.path = \"" + table + "\"\n" + body);
    return f;
  }

  @Test
  void versionNamesTheBlasAndTheSimdKernels() {
    CommandRun o = CommandRun.of("version");
    assertEquals(0, o.code(), o.err());
    // the suite's JVM resolves jdk.incubator.vector (the pom's argLine), so the kernels are the SIMD ones
    assertTrue(o.out().matches("eigenmill \\S+ \\(BLAS .*, LAPACK .*; nearest-centroid kernel "
        + "(SIMD, \\d+ double lanes|scalar); column copy (SIMD, \\d+ double lanes|scalar)\\)\\n"), o.out());
    assertEquals(io.eigenmill.math.NearestKeys.best().describe(),
        o.out().replaceAll("(?s).*nearest-centroid kernel (.*); column copy.*", "$1"));
    assertEquals(io.eigenmill.math.ShiftedCopy.best().describe(),
        o.out().replaceAll("(?s).*column copy (.*)\\)\\n", "$1"));
  }

  @Test
  void planResolvesGlobsAndComputesNothing() throws Exception {
    Path f = job("plan-ok", "features.columns = [\"cpu_*\", \"fan?_rpm\", mem_used_pct]\nfeatures.keys = [host]\n"
        + "output.path = \"" + dir.resolve("never") + "\"\n");
    CommandRun o = CommandRun.of("plan", f.toString());
    assertEquals(0, o.code(), o.err());
    assertTrue(o.out().contains("features (4):    cpu_user_pct:double, cpu_system_pct:double, fan1_rpm:int,"
        + " mem_used_pct:double"), o.out());
    assertTrue(o.out().contains("400 rows (footers)"), o.out());
    assertTrue(o.out().contains("method:          covariance - auto"), o.out());
    assertFalse(Files.exists(dir.resolve("never")), "plan writes nothing");
  }

  @Test
  void planRejectsANonNumericFeatureWithItsType() throws Exception {
    Path f = job("plan-string", "features.columns = [region, cpu_user_pct]\noutput.path = \"/tmp/x\"\n");
    CommandRun o = CommandRun.of("plan", f.toString());
    assertEquals(2, o.code());
    assertEquals("eigenmill: error: features.columns: column region has type string; feature columns must be"
        + " numeric (double, float, int, long, short, byte or decimal)\n", o.err());
  }

  @Test
  void planRejectsAMissingInputPath() throws Exception {
    Path f = dir.resolve("plan-missing.conf");
    Files.writeString(f, "input.path = \"" + dir.resolve("nothing-here") + "\"\noutput.path = \"/tmp/x\"\n");
    CommandRun o = CommandRun.of("plan", f.toString());
    assertEquals(2, o.code());
    assertEquals("eigenmill: error: input.path = " + dir.resolve("nothing-here") + ": no such file or folder\n",
        o.err());
  }

  @Test
  void runWritesAtomicallyAndRefusesAnExistingOutput() throws Exception {
    Path out = dir.resolve("run-out");
    Path f = job("run", "features.keys = [host, region]\noutput.scores = true\noutput.path = \"" + out + "\"\n");
    CommandRun first = CommandRun.of("run", f.toString());
    assertEquals(0, first.code(), first.err());
    assertTrue(first.out().contains("fit: 400 rows (0 dropped), 6 features"), first.out());
    for (String part : List.of("summary.json", "model", "components", "spectrum", "scores",
        OutputCommit.MARKER)) {
      assertTrue(Files.exists(out.resolve(part)), part);
    }
    CommandRun again = CommandRun.of("run", f.toString());
    assertEquals(2, again.code());
    assertEquals("eigenmill: error: output.path = " + out + ": already exists; set output.mode = overwrite to"
        + " replace it, or choose another path\n", again.err());
    CommandRun overwrite = CommandRun.of("run", f.toString(), "--set", "output.mode=overwrite", "--set",
        "reduce.components=2");
    assertEquals(0, overwrite.code(), overwrite.err());
    assertTrue(Files.readString(out.resolve("summary.json")).contains("\"components\" : 2"));
  }

  @Test
  void aFailedRunLeavesNothingBehind() throws Exception {
    Path withNulls = dir.resolve("with-nulls");
    spark.read().parquet(table.toString()).selectExpr("host", "IF(cpu_user_pct > 65, NULL, cpu_user_pct) AS cpu",
        "mem_used_pct").write().parquet(withNulls.toString());
    Path out = dir.resolve("failed-out");
    Path f = dir.resolve("fail.conf");
    Files.writeString(f, "input.path = \"" + withNulls + "\"\nprepare.missing = fail\noutput.path = \"" + out
        + "\"\n");
    CommandRun o = CommandRun.of("run", f.toString());
    assertEquals(2, o.code());
    assertTrue(o.err().startsWith("eigenmill: error: prepare.missing = fail: the input has missing values"
        + " (null, NaN or infinite): cpu: "), o.err());
    assertFalse(Files.exists(out), "no output after a failed run");
    try (var siblings = Files.list(dir)) {
      assertTrue(siblings.noneMatch(p -> p.getFileName().toString().startsWith(".failed-out")),
          "no staging folder left");
    }
  }

  @Test
  void usageErrorsExitWithTwo() {
    assertEquals(2, CommandRun.of().code());
    assertEquals(2, CommandRun.of("fit", "x.conf").code());
    assertEquals(2, CommandRun.of("run").code());
    CommandRun o = CommandRun.of("run", "/nonexistent/job.conf");
    assertEquals(2, o.code());
    assertEquals("eigenmill: error: job file /nonexistent/job.conf does not exist or is not a file\n", o.err());
  }

  /** A separate JVM: the real exit code, and log lines through slf4j 2 -> log4j 2 (Spark's own versions). */
  @Test
  void separateJvmRunsLogsAndExits() throws Exception {
    Path out = dir.resolve("jvm-out");
    Path f = job("jvm", "features.keys = [host]\noutput.path = \"" + out + "\"\n");
    String repo = System.getProperty("eigenmill.repo", ".");
    List<String> cmd = new ArrayList<>(List.of(new File(System.getProperty("java.home"), "bin/java").getPath(),
        "-Xmx1g"));
    cmd.addAll(List.of(System.getProperty("eigenmill.jvm.opens", "").split(" ")));
    cmd.removeIf(String::isBlank);
    cmd.addAll(List.of("-Dlog4j2.configurationFile=" + repo + "/conf/log4j2.properties",
        "-cp", System.getProperty("java.class.path"), Main.class.getName(), "run", f.toString(),
        "--env", repo + "/conf/local.conf", "--set", "spark.master=local[1]"));
    Process p = new ProcessBuilder(cmd).redirectOutput(dir.resolve("jvm.out").toFile())
        .redirectError(dir.resolve("jvm.err").toFile()).start();
    assertTrue(p.waitFor(240, TimeUnit.SECONDS), "the JVM finished");
    String err = Files.readString(dir.resolve("jvm.err"));
    assertEquals(0, p.exitValue(), err);
    assertTrue(err.contains("INFO progress: fit/moments: done, 400 rows"), "progress is logged:\n" + err);
    assertTrue(Files.readString(dir.resolve("jvm.out")).contains("summary: "));
    assertTrue(Files.exists(out.resolve("summary.json")));

    Path bad = dir.resolve("bad.conf");
    Files.writeString(bad, "input.path = \"/x\"\noutput.path = \"/y\"\nreduce.metod = tsqr\n");
    List<String> badCmd = new ArrayList<>(cmd.subList(0, cmd.indexOf("run")));
    badCmd.addAll(List.of("plan", bad.toString()));
    Process q = new ProcessBuilder(badCmd).redirectErrorStream(true).start();
    String text = new String(q.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
    assertTrue(q.waitFor(60, TimeUnit.SECONDS));
    assertEquals(2, q.exitValue(), text);
    assertTrue(text.contains("eigenmill: error: bad.conf:3: reduce.metod: unknown key (did you mean reduce.method?)"),
        text);
  }
}
