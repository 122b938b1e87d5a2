package io.eigenmill.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.atomic.AtomicInteger;
import org.apache.spark.scheduler.SparkListener;
import org.apache.spark.scheduler.SparkListenerJobStart;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The Java API against the command line's runner on the same rows (USArrests from the shared datasets): the same
 * model, scores and clusters, bit for bit, since both run the same code; lazy scores that run no Spark job until
 * the caller acts; the command line's messages for bad settings. Reference values: R 4.2.2 on USArrests
 * (usarrests.reference.json), with the tolerances of EigenmillExampleTest.
 */
class EigenmillTest extends SparkSuite {
  static final String FIT = "features.keys = [state]\nprepare.scaling = standardize\nreduce.components = 2\n";
  static final String[] COLUMNS = {"state", "pc_1", "pc_2", "t2", "q"};
  private static String csv;

  @BeforeAll
  static void table() {
    csv = Datasets.csv("usarrests").toString();
  }

  private static Dataset<Row> arrests() {
    return spark.read().option("header", "true").option("inferSchema", "true").csv(csv);
  }

  /** The command line's job: the same settings over input.path. */
  private static RunResult cli(String hocon) {
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + csv + "\"\ninput.format = csv\n" + hocon));
  }

  private static List<Row> rows(Dataset<Row> table, String... columns) {
    return table.selectExpr(columns).orderBy("state").collectAsList();
  }

  private static String out(Path dir) {
    return "output.path = \"" + dir + "\"\n";
  }

  @Test
  void writtenFitIsTheCommandLinesFit() {
    Path dir = JobFiles.scratch("api-fit");
    RunResult cli = cli(FIT + "output.scores = true\n" + out(dir.resolve("cli")));
    JobResult api = Eigenmill.fit(spark, arrests(), FIT + "output.scores = true\n" + out(dir.resolve("api")));
    // one code path: the same model bit for bit (its fingerprint hashes means, scales, loadings, eigenvalues, rows)
    assertEquals(cli.model().contentFingerprint(), api.run().model().contentFingerprint());
    assertEquals(50, api.rows(), "usarrests.reference.json: n = 50");
    assertEquals(cli.monitor().t2Limit(), api.t2Limit());
    assertEquals(cli.monitor().qLimit(), api.qLimit());
    // written as the command line writes: the same scores table and a summary
    assertEquals(rows(spark.read().parquet(dir.resolve("cli/scores").toString()), COLUMNS),
        rows(api.scores(), COLUMNS));
    assertTrue(Files.isRegularFile(dir.resolve("api/summary.json")), "summary.json written");
    assertTrue(api.summaryJson().contains("\"timings_seconds\""), "summary.json's values in the result");
    // R prcomp, usarrests.reference.json: explained variance ratios 0.62006, 0.24744 (tolerance 1e-9, FitJobTest)
    assertEquals(0.6200603947873734, api.explainedVarianceShares()[0], 1e-9);
    assertEquals(0.24744128813496027, api.explainedVarianceShares()[1], 1e-9);
  }

  @Test
  void lazyScoresRunNoJobUntilUsed() throws Exception {
    JobResult lazy = Eigenmill.fit(spark, arrests(), FIT);
    assertNull(lazy.outputPath(), "nothing written without output.path");
    AtomicInteger jobs = new AtomicInteger();
    SparkListener counter = new SparkListener() {
      @Override
      public void onJobStart(SparkListenerJobStart start) {
        jobs.incrementAndGet();
      }
    };
    spark.sparkContext().listenerBus().waitUntilEmpty();
    spark.sparkContext().addSparkListener(counter);
    try {
      Dataset<Row> scores = lazy.scores().selectExpr(COLUMNS).orderBy("state");
      spark.sparkContext().listenerBus().waitUntilEmpty();
      assertEquals(0, jobs.get(), "Spark jobs before the caller acts on the scores");
      List<Row> scored = scores.collectAsList();
      spark.sparkContext().listenerBus().waitUntilEmpty();
      assertTrue(jobs.get() > 0, "the action runs the scoring pass");
      // R prcomp, usarrests.reference.json: Alabama's scores on PC1 and PC2 (x[1, 1:2])
      assertEquals("Alabama", scored.get(0).getString(0));
      assertEquals(0.9756604483336057, scored.get(0).getDouble(1), 1e-6);
      assertEquals(-1.1220012104334112, scored.get(0).getDouble(2), 1e-6);
      // the same rows, bit for bit, as the command line writes
      Path dir = JobFiles.scratch("api-lazy");
      cli(FIT + "output.scores = true\n" + out(dir.resolve("cli")));
      assertEquals(rows(spark.read().parquet(dir.resolve("cli/scores").toString()), COLUMNS), scored);
    } finally {
      spark.sparkContext().removeSparkListener(counter);
    }
  }

  @Test
  void applyMatchesTheCommandLine() {
    Path dir = JobFiles.scratch("api-apply");
    Eigenmill.fit(spark, arrests(), FIT + out(dir.resolve("fit")));
    String apply = "features.keys = [state]\napply.model = \"" + dir.resolve("fit") + "\"\n";
    RunResult cli = cli(apply + out(dir.resolve("cli")));
    JobResult written = Eigenmill.apply(spark, arrests(), apply + out(dir.resolve("api")));
    JobResult lazy = Eigenmill.apply(spark, arrests(), apply);
    List<Row> expected = rows(spark.read().parquet(dir.resolve("cli/scores").toString()), COLUMNS);
    assertEquals(expected, rows(written.scores(), COLUMNS), "written apply");
    assertEquals(expected, rows(lazy.scores(), COLUMNS), "lazy apply");
    assertEquals(cli.monitor().t2Limit(), lazy.t2Limit(), "new rows' T2 limit");
    assertEquals(cli.monitor().qLimit(), lazy.qLimit(), "new rows' Q limit");
    assertEquals(50, written.rows(), "usarrests.reference.json: n = 50");
    // R prcomp, usarrests.reference.json: Alaska's score on PC1 (x[2, 1]); the model applied to its own rows
    assertEquals(1.9305378785136842, expected.get(1).getDouble(1), 1e-6);
  }

  @Test
  void clusterMatchesTheCommandLine() {
    Path dir = JobFiles.scratch("api-cluster");
    String job = "features.keys = [state]\nprepare.scaling = standardize\nreduce.components = 4\n";
    RunResult cli = cli(job + "cluster { enabled = true, k = 4, restarts = 40 }\n" + out(dir.resolve("cli")));
    JobResult api = Eigenmill.cluster(spark, arrests(), job + "cluster { k = 4, restarts = 40 }\n"
        + out(dir.resolve("api")));
    assertEquals(rows(spark.read().parquet(dir.resolve("cli/clusters/assignments").toString()), "state", "cluster"),
        rows(api.clusters(), "state", "cluster"));
    assertEquals(cli.clusters().wcss(), api.run().clusters().wcss());
    // usarrests.reference.json, kmeans.standardized k = 4: best within-cluster sum of squares 56.40317346 (R, 200
    // Hartigan-Wong starts); with all 4 components the score space is an isometry of the standardized features
    assertEquals(56.40317346, api.run().clusters().wcss(), 1e-6 * 56.40317346);
  }

  @Test
  void badSettingsThrowTheCommandLinesMessage() {
    InvalidJobException components = assertThrows(InvalidJobException.class,
        () -> Eigenmill.fit(spark, arrests(), "reduce.components = 0\n"));
    assertTrue(components.getMessage().contains("reduce.components"), components.getMessage());
    InvalidJobException cliComponents = assertThrows(InvalidJobException.class,
        () -> JobFiles.settings("input.path = \"" + csv + "\"\nreduce.components = 0\noutput.path = x\n"));
    assertEquals(rule(cliComponents.getMessage()), rule(components.getMessage()), "the command line's rule");
    InvalidJobException column = assertThrows(InvalidJobException.class,
        () -> Eigenmill.fit(spark, arrests(), "features.columns = [Murdr]\nfeatures.keys = [state]\n"));
    assertTrue(column.getMessage().contains("Murdr"), column.getMessage());
    InvalidJobException where = assertThrows(InvalidJobException.class,
        () -> Eigenmill.fit(spark, arrests(), "input.where = \"Murdr > 1\"\nfeatures.keys = [state]\n"));
    assertTrue(where.getMessage().contains("input.where"), where.getMessage());
    InvalidJobException cluster = assertThrows(InvalidJobException.class,
        () -> Eigenmill.cluster(spark, arrests(), "cluster.k = 4\n"));
    assertTrue(cluster.getMessage().contains("output.path"), cluster.getMessage());
  }

  /** The message after its source prefix ("job:3: ", "x.conf:2: "): the setting, the value and the rule. */
  private static String rule(String message) {
    int at = message.indexOf("reduce.components");
    return message.substring(at);
  }
}
