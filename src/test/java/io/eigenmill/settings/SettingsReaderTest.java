package io.eigenmill.settings;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.typesafe.config.Config;
import com.typesafe.config.ConfigFactory;
import java.io.File;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;

/** The job-file contract: defaults from reference.conf only, and one clear message per problem. */
class SettingsReaderTest {
  private static final String MINIMAL = "input.path = \"/data/in\"\noutput.path = \"/data/out\"\n";

  private static JobSettings read(String hocon, String... sets) {
    return new SettingsReader().readString(hocon, List.of(sets), "job.conf");
  }

  private static List<String> problems(String hocon, String... sets) {
    return assertThrows(InvalidJobException.class, () -> read(hocon, sets)).problems();
  }

  @Test
  void everyDefaultComesFromReferenceConf() {
    Config ref = ConfigFactory.parseResources("reference.conf").resolve().getConfig("eigenmill.job");
    JobSettings s = read(MINIMAL);
    assertEquals(ref.getString("input.format"), s.input().format().word());
    assertEquals(ref.getString("input.corrupt-files"), s.input().corruptFiles().word());
    assertEquals(ref.getString("input.where"), s.input().where());
    assertFalse(s.input().filtered(), "no row filter by default");
    assertEquals(ref.getStringList("features.columns"), s.features().columns());
    assertEquals(ref.getString("prepare.scaling"), s.prepare().scaling().word());
    assertEquals(ref.getString("prepare.missing"), s.prepare().missing().word());
    assertEquals(ref.getString("reduce.method"), s.reduce().method().word());
    assertTrue(ref.getIsNull("reduce.components") && s.reduce().components().isEmpty());
    assertEquals(ref.getDouble("reduce.variance-target"), s.reduce().varianceTarget());
    assertEquals(ref.getInt("reduce.max-components"), s.reduce().maxComponents());
    assertEquals(ref.getInt("reduce.block-rows"), s.reduce().blockRows());
    assertEquals(ref.getInt("reduce.randomized.oversample"), s.reduce().oversample());
    assertEquals(ref.getInt("reduce.randomized.power-iterations"), s.reduce().powerIterations());
    assertEquals(ref.getLong("reduce.randomized.seed"), s.reduce().seed());
    assertEquals(ref.getDouble("reduce.randomized.tolerance"), s.reduce().randomizedTolerance());
    assertEquals(ref.getInt("reduce.randomized.max-power-iterations"), s.reduce().maxPowerIterations());
    assertEquals(ref.getDouble("monitor.confidence"), s.monitor().confidence());
    assertEquals(ref.getString("monitor.q-limit"), s.monitor().qLimit().word());
    assertEquals(ref.getString("output.mode"), s.output().mode().word());
    assertEquals(ref.getBoolean("output.scores"), s.output().scores());
    assertEquals(ref.getBoolean("cluster.enabled"), s.cluster().enabled());
    assertEquals(ref.getString("cluster.select-by"), s.cluster().selectBy().word());
    assertEquals(ref.getInt("cluster.restarts"), s.cluster().restarts());
    assertEquals(ref.getInt("cluster.restarts-at-best"), s.cluster().restartsAtBest());
    assertEquals(ref.getInt("cluster.max-restarts"), s.cluster().maxRestarts());
    assertEquals(ref.getString("spark.master"), s.spark().master());
    assertEquals("job", s.name(), "the name defaults to the job file's base name");
  }

  /** The predicate is read as written (surrounding blanks dropped); Spark checks it against the schema later. */
  @Test
  void aRowFilterIsReadAsWritten() {
    JobSettings s = read(MINIMAL + "input.where = \" date >= '2026-11-01' and region = 'eu' \"\n");
    assertEquals("date >= '2026-11-01' and region = 'eu'", s.input().where());
    assertTrue(s.input().filtered());
    assertFalse(read(MINIMAL + "input.where = \"  \"\n").input().filtered(), "blank: no filter");
    assertEquals(List.of("job.conf:3: input.where = [1,2]: must be a string"),
        problems(MINIMAL + "input.where = [1, 2]\n"));
  }

  @Test
  void unknownKeyGetsADidYouMeanHint() {
    assertEquals(List.of("job.conf:3: reduce.componets: unknown key (did you mean reduce.components?)"),
        problems(MINIMAL + "reduce.componets = 3\n"));
  }

  @Test
  void wrongTypeNamesKeyValueAndRule() {
    assertEquals(List.of("job.conf:3: reduce.components = \"many\": must be an integer from 1 to 100000"),
        problems(MINIMAL + "reduce.components = \"many\"\n"));
  }

  @Test
  void outOfRangeValueNamesKeyValueAndRule() {
    assertEquals(List.of("job.conf:3: monitor.confidence = 1.5: must be a fraction in (0, 1)"),
        problems(MINIMAL + "monitor.confidence = 1.5\n"));
    assertEquals(List.of("job.conf:3: reduce.method = \"fast\": must be one of auto, covariance, tsqr, randomized"),
        problems(MINIMAL + "reduce.method = fast\n"));
    // every sampled row is a point of the report's drawing
    assertEquals(List.of("job.conf:3: output.report-sample = 1000000: must be an integer from 0 to 50000"),
        problems(MINIMAL + "output.report-sample = 1000000\n"));
    assertEquals(List.of("job.conf:3: cluster.init-sample = -1: must be an integer from 0 to 10000000"),
        problems(MINIMAL + "cluster.init-sample = -1\ncluster.enabled = true\n"));
    // 1e400 overflows a double (IEEE 754: largest finite value about 1.8e308) and is no tolerance
    assertEquals(List.of("job.conf:3: cluster.tolerance = Infinity: must be a positive number"),
        problems(MINIMAL + "cluster.tolerance = 1e400\ncluster.enabled = true\n"));
  }

  @Test
  void randomizedToleranceAndItsCap() {
    List<String> low = problems(MINIMAL + "reduce.randomized.power-iterations = 4\n"
        + "reduce.randomized.max-power-iterations = 3\n");
    assertEquals(1, low.size(), low.toString());
    assertTrue(low.get(0).contains("reduce.randomized.max-power-iterations = 3 is below"
        + " reduce.randomized.power-iterations = 4"), low.get(0));
    List<String> zero = problems(MINIMAL + "reduce.randomized.tolerance = 0\n");
    assertTrue(zero.get(0).contains("reduce.randomized.tolerance = 0: must be a positive number"), zero.get(0));
    JobSettings s = read(MINIMAL + "reduce.randomized.tolerance = 1e-6\nreduce.randomized.max-power-iterations = 2\n");
    assertEquals(1e-6, s.reduce().randomizedTolerance());
    assertEquals(2, s.reduce().maxPowerIterations());
  }

  @Test
  void missingRequiredKey() {
    assertEquals(List.of("job.conf: output.path is required and has no value (set it in the job file or with"
        + " --set output.path=...)"), problems("input.path = \"/x\"\n"));
  }

  @Test
  void conflictingKeys() {
    assertEquals(List.of("job.conf:3: reduce.components and reduce.variance-target are both set; set only one"
            + " (components fixes k, variance-target chooses the smallest k reaching the target)"),
        problems(MINIMAL + "reduce.components = 3\nreduce.variance-target = 0.8\n"));
  }

  @Test
  void everyProblemIsReportedAtOnce() {
    List<String> all = problems("input.path = \"/x\"\nreduce.method = fast\nprepare.scalling = none\n");
    assertEquals(3, all.size(), all.toString());
    assertTrue(all.get(0).contains("prepare.scalling: unknown key (did you mean prepare.scaling?)"), all.get(0));
  }

  @Test
  void syntaxErrorCarriesTheLineNumber() throws Exception {
    Path f = Files.createTempDirectory("eigenmill-conf").resolve("broken.conf");
    Files.writeString(f, "input.path = \"/x\"\noutput.path = \"/y\"\nreduce {\n  method = covariance\n");
    InvalidJobException e = assertThrows(InvalidJobException.class,
        () -> new SettingsReader().read(f.toFile(), List.of()));
    assertTrue(e.getMessage().startsWith("broken.conf:5: HOCON syntax error: "), e.getMessage());
  }

  @Test
  void setOverridesTheFileAndEnvironmentProfile() throws Exception {
    Path dir = Files.createTempDirectory("eigenmill-conf");
    Path job = dir.resolve("j.conf");
    Path env = dir.resolve("env.conf");
    Files.writeString(job, MINIMAL + "reduce.method = tsqr\nspark.master = \"local[1]\"\n");
    Files.writeString(env, "spark { master = \"local[3]\", conf { \"spark.sql.shuffle.partitions\" = 5 } }\n");
    JobSettings s = new SettingsReader().read(job.toFile(), List.of("reduce.method=randomized",
        "reduce.components=4"), env.toFile());
    assertEquals(Choices.Method.RANDOMIZED, s.reduce().method());
    assertEquals(4, s.reduce().components().getAsInt());
    assertEquals("local[1]", s.spark().master(), "the job file wins over the profile");
    assertEquals("5", s.spark().conf().get("spark.sql.shuffle.partitions"));
  }

  @Test
  void sparkConfPassesThroughAnyKey() {
    JobSettings s = read(MINIMAL + "spark.conf { \"spark.executor.memory\" = 2g }\n");
    assertEquals("2g", s.spark().conf().get("spark.executor.memory"));
  }

  @Test
  void missingJobFileIsReported() {
    InvalidJobException e = assertThrows(InvalidJobException.class,
        () -> new SettingsReader().read(new File("/nonexistent/job.conf"), List.of()));
    assertFalse(e.problems().isEmpty());
    assertTrue(e.getMessage().contains("/nonexistent/job.conf"));
  }

  @Test
  void clusterRangeIsParsedAndChecked() {
    JobSettings s = read(MINIMAL + "cluster.k-range = \"3..9\"\ncluster.enabled = true\n");
    assertEquals(3, s.cluster().kMin());
    assertEquals(9, s.cluster().kMax());
    assertEquals(List.of("job.conf:3: cluster.k-range = \"9..3\": must be a range \"LOW..HIGH\" with"
        + " 2 <= LOW <= HIGH <= 1000"), problems(MINIMAL + "cluster.k-range = \"9..3\"\ncluster.enabled = true\n"));
    // the quality measures that choose k (README, cluster.select-by) compare two clusters or more
    assertEquals(List.of("job.conf:3: cluster.k-range = \"1..3\": must be a range \"LOW..HIGH\" with"
        + " 2 <= LOW <= HIGH <= 1000 (the quality measures that choose k need two clusters; set cluster.k = 1 to get"
        + " one cluster)"), problems(MINIMAL + "cluster.k-range = \"1..3\"\ncluster.enabled = true\n"));
  }

  @Test
  void clusterKeysWithoutClusteringAreAnError() {
    // the reported case: a cluster block without enabled; one problem naming every key set, its value and the fix
    assertEquals(List.of("job.conf:3: cluster.entity = \"host\", cluster.k = 4: has no effect while"
            + " cluster.enabled is false (its default): no clustering would run; set cluster.enabled = true to"
            + " cluster, or remove these keys"),
        problems(MINIMAL + "cluster { k = 4, entity = host }\n"));
    // cluster.k-range has a default in reference.conf: only a value the user gives counts, from --set as well
    assertEquals(List.of("--set: cluster.k-range = \"3..5\": has no effect while cluster.enabled is false (its"
        + " default): no clustering would run; set cluster.enabled = true to cluster, or remove the key"),
        problems(MINIMAL, "cluster.k-range=\"3..5\""));
    assertTrue(read(MINIMAL).warnings().isEmpty(), "defaults alone are no finding");
    // with clustering on, the same keys are simply used
    JobSettings on = read(MINIMAL + "cluster { enabled = true, k = 4, entity = host }\n");
    assertEquals(4, on.cluster().k().getAsInt());
    assertTrue(on.warnings().isEmpty(), on.warnings().toString());
  }

  @Test
  void clusteringSwitchedOffDeliberatelyIsAWarning() {
    // cluster.enabled = false written by the user (here --set over a job file that clusters): the run goes on,
    // and the warning names the keys left without effect and where clustering was switched off
    JobSettings s = read(MINIMAL + "cluster { enabled = true, k = 4 }\n", "cluster.enabled=false");
    assertFalse(s.cluster().enabled());
    assertEquals(List.of("job.conf:3: cluster.k = 4: ignored, because cluster.enabled = false (--set); set"
        + " cluster.enabled = true to cluster, or remove the key"), s.warnings());
  }

  @Test
  void fitOnlyKeysInAnApplyJobAreAWarning() {
    String apply = MINIMAL + "apply.model = \"/models/fleet\"\n";
    JobSettings s = read(apply + "prepare.scaling = standardize\nprepare.missing = impute-mean\n"
        + "reduce.components = 3\nreduce.block-rows = 512\n");
    // prepare.missing (how scored rows with missing cells are treated) and reduce.block-rows (the scoring pass's
    // block size) apply to the scored rows: only the fit-only keys are named
    assertEquals(List.of("job.conf:4: prepare.scaling = \"standardize\", reduce.components = 3: ignored in an"
        + " apply job (apply.model is set): the model's preparation (its means and scaling, as fitted) and its"
        + " components are used; remove these keys (prepare.missing still applies to the scored rows)"),
        s.warnings());
    assertTrue(read(apply + "prepare.missing = impute-mean\n").warnings().isEmpty());
    assertTrue(read(MINIMAL + "prepare.scaling = standardize\n").warnings().isEmpty(), "a fit uses it");
  }
}
