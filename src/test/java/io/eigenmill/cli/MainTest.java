package io.eigenmill.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.io.OutputCommit;
import io.eigenmill.testing.BuildDir;
import io.eigenmill.testing.ChildJvm;
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
class MainTest extends SparkSuite {
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
    String first = o.out().substring(0, o.out().indexOf('\n') + 1);
    // the suite's JVM resolves jdk.incubator.vector (the pom's argLine), so the kernels are the SIMD ones
    assertTrue(first.matches("eigenmill \\S+ \\(BLAS .*, LAPACK .*; nearest-centroid kernel "
        + "(SIMD, \\d+ double lanes|scalar); column copy (SIMD, \\d+ double lanes|scalar)\\)\\n"), o.out());
    assertEquals(io.eigenmill.kmeans.math.NearestKeys.best().describe(),
        first.replaceAll("(?s).*nearest-centroid kernel (.*); column copy.*", "$1"));
    assertEquals(io.eigenmill.math.ShiftedCopy.best().describe(),
        first.replaceAll("(?s).*column copy (.*)\\)\\n", "$1"));
  }

  @Test
  void versionNamesTheSparkAndScalaItRunsOn() {
    CommandRun o = CommandRun.of("version");
    assertEquals(0, o.code(), o.err());
    String second = o.out().split("\n")[1];
    // the outside source: Spark's and Scala's own version of the classes on this class path
    String spark = org.apache.spark.package$.MODULE$.SPARK_VERSION();
    String scalaVersion = scala.util.Properties.versionNumberString();
    boolean four = BuildDir.sparkLine().equals("4");
    assertTrue(spark.startsWith(four ? "4." : "3.5."), spark);
    assertTrue(scalaVersion.startsWith(four ? "2.13." : "2.12."), scalaVersion);
    assertEquals("Running on Spark " + spark + ", Scala " + scalaVersion + " (built for the Spark " + BuildDir.sparkLine()
        + " line against " + spark + ": eigenmill_" + (four ? "2.13" : "2.12") + ")", second);
  }

  @Test
  void versionPrintsPomsJvmFlagsForSparkSubmit() throws Exception {
    CommandRun o = CommandRun.of("version");
    assertEquals(0, o.code(), o.err());
    // the outside source: pom.xml's flags of the Spark line under test (spark35.jvm.opens, spark4.jvm.opens), read
    // here as text
    String pom = Files.readString(Path.of(System.getProperty("eigenmill.repo", "."), "pom.xml"));
    String property = "spark" + BuildDir.sparkLine().replace(".", "") + "\\.jvm\\.opens";
    java.util.regex.Matcher m = java.util.regex.Pattern.compile("<" + property + ">(.*?)</" + property + ">")
        .matcher(pom);
    assertTrue(m.find(), "pom.xml has " + property);
    List<String> expected = List.of(m.group(1).trim().split("\\s+"));
    // common practice, no source: Spark 3.5 on Java 17 needs java.base opened (sun.nio.ch among them); the vector
    // module is the one the SIMD kernels use
    assertTrue(expected.contains("--add-opens=java.base/sun.nio.ch=ALL-UNNAMED"), expected.toString());
    assertTrue(expected.contains("--add-modules=jdk.incubator.vector"), expected.toString());
    String driver = quoted(o.out(), "  --driver-java-options \"");
    String executors = quoted(o.out(), "  --conf \"spark.executor.extraJavaOptions=");
    assertEquals(expected, List.of(driver.split(" ")), o.out());
    assertEquals(expected, List.of(executors.split(" ")), o.out());
    // pasted as printed, a Java 17 JVM accepts every flag (an unknown option or module would exit non-zero)
    List<String> cmd = new ArrayList<>(List.of(new File(System.getProperty("java.home"), "bin/java").getPath()));
    cmd.addAll(List.of(driver.split(" ")));
    cmd.add("-version");
    Process p = new ProcessBuilder(cmd).redirectErrorStream(true).start();
    String text = new String(p.getInputStream().readAllBytes(), StandardCharsets.UTF_8);
    assertTrue(p.waitFor(60, TimeUnit.SECONDS));
    assertEquals(0, p.exitValue(), text);
  }

  /** The text between {@code prefix} and the closing quote at the end of its line in {@code out}. */
  private static String quoted(String out, String prefix) {
    int at = out.indexOf(prefix);
    assertTrue(at >= 0, "no line starting " + prefix + " in:\n" + out);
    int end = out.indexOf('\n', at);
    String line = out.substring(at + prefix.length(), end);
    assertTrue(line.endsWith("\""), line);
    return line.substring(0, line.length() - 1);
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
  void clusterKeysWithoutClusteringStopPlanAndRun() throws Exception {
    Path f = job("cluster-off", "features.keys = [host]\ncluster { k = 4, entity = host }\noutput.path = \""
        + dir.resolve("never-clustered") + "\"\n");
    for (String command : List.of("plan", "run")) {
      CommandRun o = CommandRun.of(command, f.toString());
      assertEquals(2, o.code(), command + ": " + o.out());
      assertEquals("eigenmill: error: cluster-off.conf:3: cluster.entity = \"host\", cluster.k = 4: has no effect"
          + " while cluster.enabled is false (its default): no clustering would run; set cluster.enabled = true to"
          + " cluster, or remove these keys\n", o.err(), command);
    }
    assertFalse(Files.exists(dir.resolve("never-clustered")));
    // switched off on the command line for one run of a job file that clusters: a warning, and the plan goes on
    Path on = job("cluster-on", "features.keys = [host]\ncluster { enabled = true, k = 4 }\noutput.path = \""
        + dir.resolve("never-clustered") + "\"\n");
    CommandRun off = CommandRun.of("plan", on.toString(), "--set", "cluster.enabled=false");
    assertEquals(0, off.code(), off.err());
    assertTrue(off.out().contains("warning:         cluster-on.conf:3: cluster.k = 4: ignored, because"
        + " cluster.enabled = false (--set); set cluster.enabled = true to cluster, or remove the key\n"), off.out());
  }

  @Test
  void settingsWithoutEffectAreWarnedInPlanRunAndSummary() throws Exception {
    // a numeric key matched by a feature glob: used as a key only
    Path fit = dir.resolve("warn-fit");
    Path f = job("warn-fit", "features.columns = [\"cpu_*\", \"fan?_rpm\", mem_used_pct]\n"
        + "features.keys = [host, fan1_rpm]\noutput.path = \"" + fit + "\"\n");
    String keyWarning = "features.columns: 'fan?_rpm' matches fan1_rpm, which is in features.keys: fan1_rpm is"
        + " used as a key only, not as a feature (add it to features.exclude, or write features.columns so that no"
        + " glob matches it, to silence this warning)";
    CommandRun plan = CommandRun.of("plan", f.toString());
    assertEquals(0, plan.code(), plan.err());
    assertTrue(plan.out().contains("features (3):    cpu_user_pct:double, cpu_system_pct:double, mem_used_pct:double"),
        plan.out());
    assertTrue(plan.out().contains("warning:         " + keyWarning + "\n"), plan.out());
    CommandRun run = CommandRun.of("run", f.toString());
    assertEquals(0, run.code(), run.err());
    assertTrue(run.out().contains("warning: " + keyWarning + "\n"), run.out());
    assertEquals(List.of(keyWarning), summaryWarnings(fit));

    // prepare.scaling in an apply job: the model's preparation is used
    Path applied = dir.resolve("warn-apply");
    Path a = job("warn-apply", "features.keys = [host]\napply.model = \"" + fit + "\"\n"
        + "prepare.scaling = standardize\noutput.path = \"" + applied + "\"\n");
    String scalingWarning = "warn-apply.conf:4: prepare.scaling = \"standardize\": ignored in an apply job"
        + " (apply.model is set): the model's preparation (its means and scaling, as fitted) and its components are"
        + " used; remove the key (prepare.missing still applies to the scored rows)";
    CommandRun applyPlan = CommandRun.of("plan", a.toString());
    assertEquals(0, applyPlan.code(), applyPlan.err());
    assertTrue(applyPlan.out().contains("warning:         " + scalingWarning + "\n"), applyPlan.out());
    assertTrue(applyPlan.out().contains("scaling:         the model's\n"), applyPlan.out());
    CommandRun applyRun = CommandRun.of("run", a.toString());
    assertEquals(0, applyRun.code(), applyRun.err());
    assertTrue(applyRun.out().contains("warning: " + scalingWarning + "\n"), applyRun.out());
    assertEquals(List.of(scalingWarning), summaryWarnings(applied));
  }

  private static List<String> summaryWarnings(Path output) throws Exception {
    var json = new com.fasterxml.jackson.databind.ObjectMapper().readTree(output.resolve("summary.json").toFile());
    List<String> out = new ArrayList<>();
    json.get("warnings").forEach(w -> out.add(w.asText()));
    return out;
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
    Path f = job("jvm", "features.keys = [host, fan1_rpm]\nfeatures.columns = [\"*\"]\noutput.path = \"" + out
        + "\"\n");
    List<String> cmd = ChildJvm.command("run", f.toString());
    Process p = new ProcessBuilder(cmd).redirectOutput(dir.resolve("jvm.out").toFile())
        .redirectError(dir.resolve("jvm.err").toFile()).start();
    assertTrue(p.waitFor(240, TimeUnit.SECONDS), "the JVM finished");
    String err = Files.readString(dir.resolve("jvm.err"));
    assertEquals(0, p.exitValue(), err);
    assertTrue(err.contains("INFO progress: fit/moments: done, 400 rows"), "progress is logged:\n" + err);
    assertTrue(err.contains("WARN JobRunner: settings: features.columns: '*' matches fan1_rpm, which is in"
        + " features.keys"), "settings without effect are logged:\n" + err);
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
