package io.eigenmill.pca;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.engine.FeatureInput;
import io.eigenmill.io.TableLoader;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.plan.ScanSplits;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import io.eigenmill.testing.WideTables;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.execution.FileSourceScanExec;
import org.apache.spark.sql.execution.SparkPlan;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;

/**
 * A wide table (1,200 features, 600 rows, 3 files of several row groups) with Spark's splits made small
 * ({@code spark.sql.files.maxPartitionBytes = 256k}, as a many-split read of a large wide file): the plan cuts the
 * scan into about one split per task slot ({@link ScanSplits}) and says so, the scan has the plan's number of splits
 * (Spark's own split count of the same files is the outside check of the plan's arithmetic), the fit equals the fit
 * in Spark's own splits, and the caller's session settings are as they were.
 */
class WideSplitsTest extends SparkSuite {
  private static final int D = 1200;
  private static final int ROWS = 600;
  private static final String SPLIT = "spark.sql.files.maxPartitionBytes";
  private static final String OPEN_COST = "spark.sql.files.openCostInBytes";
  private static final String MIN_SPLITS = "spark.sql.files.minPartitionNum";
  private static final String BATCH = "spark.sql.parquet.columnarReaderBatchSize";
  private static Path dir;
  private static Path table;

  @BeforeAll
  static void write() throws Exception {
    StructType schema = WideTables.hostAndFeatures(D);
    SplittableRandom r = new SplittableRandom(20261205);
    List<Row> data = new ArrayList<>();
    for (int i = 0; i < ROWS; i++) {
      Object[] row = new Object[D + 1];
      row[0] = "h" + i;
      // three factors of distinct scales (9, 4, 1 times the unit noise) over unit noise
      double a = r.nextGaussian() * 9;
      double b = r.nextGaussian() * 4;
      double c = r.nextGaussian();
      for (int j = 0; j < D; j++) {
        row[j + 1] = 10 + (j % 5 - 2) * a + (j % 3 - 1) * b + (j % 2) * c + r.nextGaussian();
      }
      data.add(RowFactory.create(row));
    }
    dir = Files.createTempDirectory("eigenmill-wide-splits");
    table = dir.resolve("t");
    // 3 files of 200 rows (2.3 MiB each), row groups of 100 rows (the writer checks the size every 100 rows)
    spark.createDataFrame(data, schema).coalesce(1).repartition(3).write().option("parquet.block.size", 512 * 1024)
        .parquet(table.toString());
  }

  @AfterAll
  static void clean() {
    LoopbackCluster.deleteTree(dir);
  }

  @BeforeEach
  void smallSplits() {
    spark.conf().set(SPLIT, "256k");
    spark.conf().set(OPEN_COST, "64k");
  }

  @AfterEach
  void sparkDefaults() {
    spark.conf().unset(SPLIT);
    spark.conf().unset(OPEN_COST);
  }

  private static JobSettings settings(String features) {
    return JobFiles.settings("input.path = \"" + table + "\"\nfeatures.keys = [host]\n" + features
        + "reduce.method = covariance\nreduce.components = 3\nprepare.scaling = none\noutput.path = \""
        + dir.resolve("out") + "\"\n");
  }

  /** Spark's own split count for the plan of {@code frame} (its file scan, executed as Spark plans it). */
  private static int sparkSplits(Dataset<Row> frame) {
    SparkPlan node = frame.queryExecution().executedPlan();
    while (!(node instanceof FileSourceScanExec)) {
      node = node.children().head();
    }
    return node.executeColumnar().getNumPartitions();
  }

  private static long scanSplits(Dataset<Row> input, List<String> features, long splitBytes) {
    FeatureInput in = new FeatureInput(input, features, 64, splitBytes);
    assertTrue(in.columnar(), "a columnar scan");
    return in.columnarBatches().getNumPartitions();
  }

  @Test
  void wideScansGetOneSplitPerSlotAsThePlanSays() {
    JobSettings s = settings("");
    JobPlan plan = Planner.plan(spark, s);
    ScanSplits splits = plan.splits();
    Dataset<Row> input = TableLoader.load(spark, s.input());
    int own = sparkSplits(input.select(plan.features().stream().map(org.apache.spark.sql.functions::col)
        .toArray(org.apache.spark.sql.Column[]::new)));
    assertEquals(own, splits.sparkSplits(), "the plan's count of Spark's own splits is Spark's");
    assertTrue(own >= 10, "256 KiB splits cut the 3 files into many: " + own);
    // 2 slots (local[2]): 3.5 MiB per split; each 2.3 MiB file is one piece, and two never fit one split
    assertEquals(3, splits.splits());
    assertEquals(splits.splits(), scanSplits(input, plan.features(), plan.splitBytes()), "the scan's splits");
    String line = plan.describe().lines().filter(l -> l.startsWith("splits:")).findFirst().orElseThrow();
    assertTrue(line.matches("splits: +3 of at most \\d\\.\\d MiB \\(1,200 columns read \\(1,000 or more\\): about one"
        + " split per task slot \\(2\\), each split decoding its file's footer once, instead of Spark's " + own
        + " splits of at most 256\\.0 KiB; never smaller than a row group \\(\\d+ row groups of at most .*"), line);
    assertSettingsAsTheyWere();
  }

  @Test
  void narrowScansKeepSparksSplitsAndSaySo() {
    JobSettings s = settings("features.columns = [m0, m1, m2, m3]\n");
    JobPlan plan = Planner.plan(spark, s);
    Dataset<Row> input = TableLoader.load(spark, s.input());
    int own = sparkSplits(input.select("m0", "m1", "m2", "m3"));
    assertEquals(0, plan.splitBytes());
    assertEquals(own, plan.splits().splits());
    assertEquals(own, scanSplits(input, plan.features(), plan.splitBytes()));
    String line = plan.describe().lines().filter(l -> l.startsWith("splits:")).findFirst().orElseThrow();
    assertTrue(line.contains("(Spark's default: splits of at most 256.0 KiB") && line.contains("4 columns read,"
        + " fewer than 1,000"), line);
  }

  /**
   * Tolerance: the two fits read the same rows in other partitions, so only the merge tree of the partial Grams
   * changes. Each entry of a partial Gram is a sum of at most 600 products; reordering the merge of 3 against about
   * 24 partials moves an entry by a few ulps of the Gram's norm times the merge depth (Higham 2002, 4.2), and by
   * Weyl's inequality every eigenvalue by at most that: 1e-12 of the largest eigenvalue is some 4,500 eps, far above
   * it and far below the gaps between the three leading eigenvalues (factor scales 9, 4 and 1 over unit noise).
   * Loadings of a component move by the perturbation over its eigengap (Davis-Kahan): 1e-10 per entry.
   */
  @Test
  void theFitInThePlansSplitsEqualsTheFitInSparksSplits() {
    JobSettings s = settings("");
    JobPlan plan = Planner.plan(spark, s);
    assertTrue(plan.splitBytes() > 0);
    FitResult ours = new FitJob(spark, plan).execute(TableLoader.load(spark, s.input()));
    FitResult sparks = new FitJob(spark, plan.withSplits(null)).execute(TableLoader.load(spark, s.input()));
    assertEquals(ROWS, ours.model().rows());
    assertEquals(ROWS, sparks.model().rows());
    double[] a = ours.spectrum().eigenvalues();
    double[] b = sparks.spectrum().eigenvalues();
    assertEquals(a.length, b.length);
    for (int i = 0; i < a.length; i++) {
      assertEquals(b[i], a[i], 1e-12 * b[0], "eigenvalue " + i);
    }
    double[] means = sparks.model().means();
    for (int j = 0; j < D; j++) {
      assertEquals(means[j], ours.model().means()[j], 1e-12 * Math.abs(means[j]), "mean " + j);
    }
    double[] la = ours.model().loadings();
    double[] lb = sparks.model().loadings();
    assertEquals(lb.length, la.length);
    for (int i = 0; i < la.length; i++) {
      assertEquals(lb[i], la[i], 1e-10, "loading " + i);
    }
    assertSettingsAsTheyWere();
  }

  /** The settings this test gave the session, and none the scan set for itself. */
  private static void assertSettingsAsTheyWere() {
    assertEquals("256k", spark.conf().get(SPLIT));
    assertEquals("64k", spark.conf().get(OPEN_COST));
    assertFalse(spark.conf().contains(MIN_SPLITS), MIN_SPLITS + " left unset");
    assertFalse(spark.conf().contains(BATCH), BATCH + " left unset");
  }
}
