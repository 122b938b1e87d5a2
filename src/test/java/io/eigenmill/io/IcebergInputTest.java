package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.engine.ColumnarScan;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import io.eigenmill.testing.TableCatalog;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Timestamp;
import java.time.ZoneOffset;
import java.time.format.DateTimeFormatter;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.execution.datasources.v2.BatchScanExec;
import org.apache.spark.sql.execution.vectorized.OnHeapColumnVector;
import org.apache.spark.sql.functions;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;

/**
 * Iceberg tables as input ({@code input.table}, {@code input.as-of}) in the test catalog ({@link TableCatalog}):
 * the fit equals the fit of the same rows as a Parquet folder, an earlier snapshot gives the earlier data's model,
 * the scan stays columnar and the plan names the table's facts.
 */
@Tag(TableCatalog.TAG)
class IcebergInputTest extends SparkSuite {
  private static Path dir;
  private static Path folder;

  @BeforeAll
  static void folder() throws Exception {
    dir = Files.createTempDirectory("eigenmill-iceberg-input");
    folder = dir.resolve("folder");
    TableInputs.rows(spark).coalesce(1).write().parquet(folder.toString());
  }

  @AfterAll
  static void clean() {
    LoopbackCluster.deleteTree(dir);
  }

  private static String table(String name) {
    return TableCatalog.freshNamespace() + "." + name;
  }

  /** The wine data as an Iceberg table partitioned by class (one data file per class). */
  private static void byClass(String t) {
    TableInputs.rows(spark).sortWithinPartitions("class").coalesce(1).createOrReplaceTempView("wine_rows");
    spark.sql("CREATE TABLE " + t + " USING iceberg PARTITIONED BY (class) AS SELECT * FROM wine_rows");
  }

  @Test
  void unpartitionedTableFitsBitForBitAsTheFolder() throws Exception {
    String t = table("wine");
    TableInputs.rows(spark).coalesce(1).writeTo(t).using("iceberg").create();
    RunResult fromFolder = TableInputs.fit(spark, "input.path = \"" + folder + "\"");
    RunResult fromTable = TableInputs.fit(spark, "input.table = \"" + t + "\"");
    Spectrum a = fromFolder.fit().spectrum();
    Spectrum b = fromTable.fit().spectrum();
    // one data file with the rows in the folder's order, one split: the blocks are the same, so the sums are made in
    // the same order and the fit is the same bit for bit
    assertArrayEquals(a.eigenvalues(), b.eigenvalues(), 0.0);
    assertArrayEquals(a.loadings(), b.loadings(), 0.0);
    TableInputs.matchesR(b);
    assertTrue(fromTable.fit().columnarRead(), "the Iceberg scan is read as columnar batches");
  }

  @Test
  void partitionedTableFitsAsTheFolderWithinRounding() throws Exception {
    String t = table("wine_by_class");
    byClass(t);
    Spectrum a = TableInputs.fit(spark, "input.path = \"" + folder + "\"").fit().spectrum();
    Spectrum b = TableInputs.fit(spark, "input.table = \"" + t + "\"").fit().spectrum();
    // One file per class, so other blocks and another merge order: the co-moments differ by rounding only, a few
    // eps ||C|| (Chan et al.'s pairwise merge is backward stable). Weyl's inequality bounds each eigenvalue's change
    // by ||dC||: 1e-12 ||C|| leaves a margin of ~50 over 20 eps. An eigenvector moves by at most ||dC|| / gap
    // (Davis-Kahan), so loading c is held to 1e-12 ||C|| / gap_c (gap to its nearest neighbour).
    double[] e = a.eigenvalues();
    int d = e.length;
    for (int c = 0; c < d; c++) {
      assertEquals(e[c], b.eigenvalues()[c], 1e-12 * e[0], "eigenvalue " + (c + 1));
      double gap = Math.min(c > 0 ? e[c - 1] - e[c] : Double.MAX_VALUE, c < d - 1 ? e[c] - e[c + 1]
          : Double.MAX_VALUE);
      for (int j = 0; j < d; j++) {
        assertEquals(a.loading(j, c), b.loading(j, c), 1e-12 * e[0] / gap, "loading c" + (c + 1) + " " + j);
      }
    }
    TableInputs.matchesR(b);
  }

  @Test
  void applyScoresTheTableAsTheFolder() throws Exception {
    String t = table("wine_apply");
    TableInputs.rows(spark).coalesce(1).writeTo(t).using("iceberg").create();
    var fit = TableInputs.settings("input.path = \"" + folder + "\"");
    JobRunner.run(spark, fit);
    List<Row> fromFolder = scores(apply("input.path = \"" + folder + "\"", fit.output().path()));
    List<Row> fromTable = scores(apply("input.table = \"" + t + "\"", fit.output().path()));
    // the same rows in the same order, scored by the same model: the same scores, T2 and Q bit for bit
    assertEquals(178, fromTable.size(), "the wine data has 178 rows (datasets README)");
    assertEquals(fromFolder, fromTable);
  }

  private static String apply(String input, String model) throws Exception {
    Path out = Files.createTempDirectory("eigenmill-table-apply-").resolve("apply");
    JobRunner.run(spark, new io.eigenmill.settings.SettingsReader().readString(input
        + "\nfeatures.keys = [class]\napply.model = \"" + model + "\"\noutput.path = \"" + out + "\"\n", List.of(),
        "apply.conf"));
    return out.toString();
  }

  private static List<Row> scores(String out) {
    Dataset<Row> s = spark.read().parquet(out + "/scores");
    org.apache.spark.sql.Column[] all = java.util.Arrays.stream(s.columns()).map(functions::col)
        .toArray(org.apache.spark.sql.Column[]::new);
    return s.orderBy(all).collectAsList();
  }

  @Test
  void asOfAnEarlierSnapshotGivesTheEarlierModel() throws Exception {
    String t = table("wine_growing");
    Dataset<Row> wine = TableInputs.rows(spark).coalesce(1);
    wine.where("class < 3").writeTo(t).using("iceberg").create();
    Spectrum first = TableInputs.fit(spark, "input.table = \"" + t + "\"").fit().spectrum();
    Row snapshot = spark.sql("SELECT snapshot_id, committed_at FROM " + t + ".snapshots").collectAsList().get(0);
    wine.where("class = 3").writeTo(t).append();
    Spectrum now = TableInputs.fit(spark, "input.table = \"" + t + "\"").fit().spectrum();
    assertNotEquals(first.eigenvalues()[0], now.eigenvalues()[0], "the appended rows change the model");

    Spectrum byId = TableInputs.fit(spark, "input.table = \"" + t + "\"\ninput.as-of = \"" + snapshot.getLong(0)
        + "\"").fit().spectrum();
    // the first snapshot's one file: the same rows in the same order as the first fit read, so bit for bit
    assertArrayEquals(first.eigenvalues(), byId.eigenvalues(), 0.0);
    assertArrayEquals(first.loadings(), byId.loadings(), 0.0);

    String committed = ((Timestamp) snapshot.get(1)).toInstant().atOffset(ZoneOffset.UTC)
        .format(DateTimeFormatter.ISO_OFFSET_DATE_TIME);
    Spectrum byTime = TableInputs.fit(spark, "input.table = \"" + t + "\"\ninput.as-of = \"" + committed + "\"")
        .fit().spectrum();
    assertArrayEquals(first.eigenvalues(), byTime.eigenvalues(), 0.0);
    assertArrayEquals(first.loadings(), byTime.loadings(), 0.0);

    JobPlan plan = JobRunner.plan(spark, TableInputs.settings("input.table = \"" + t + "\"\ninput.as-of = \""
        + snapshot.getLong(0) + "\""));
    // classes 1 and 2 of the wine data: 59 + 71 rows (datasets README)
    assertEquals(130, plan.tableRead().rows());
    assertEquals(snapshot.getLong(0), plan.tableRead().snapshotId());
    assertEquals(130, plan.rowEstimate());
  }

  @Test
  void theScanIsColumnarThroughTheVectorGetters() throws Exception {
    String t = table("wine_scan");
    byClass(t);
    List<String> features = TableInputs.features();
    Dataset<Row> selection = spark.table(t).select(features.stream().map(functions::col)
        .toArray(org.apache.spark.sql.Column[]::new));
    ColumnarScan scan = ColumnarScan.of(selection);
    assertNotNull(scan, "the Iceberg scan qualifies: " + selection.queryExecution().executedPlan());
    assertTrue(selection.queryExecution().executedPlan().collectLeaves().head() instanceof BatchScanExec);
    int[] ord = scan.ordinals(features);
    // rows per batch, and the batches whose vectors are Spark's on-heap ones (whose arrays the Parquet path takes)
    long[] counts = scan.batches().map(b -> new long[] {b.numRows(),
        b.column(ord[0]) instanceof OnHeapColumnVector ? 1 : 0}).reduce((x, y) -> new long[] {x[0] + y[0],
        x[1] + y[1]});
    // the wine data has 178 rows (datasets README)
    assertEquals(178, counts[0]);
    assertEquals(0, counts[1], "Iceberg's vectors are its own (Arrow-backed): values come through the getters");

    JobPlan plan = JobRunner.plan(spark, TableInputs.settings("input.table = \"" + t + "\""));
    String text = plan.describe();
    assertTrue(plan.tableRead().columnar(), text);
    assertEquals("iceberg", plan.tableRead().provider(), text);
    assertEquals(List.of("class"), plan.tableRead().partitioning(), text);
    assertEquals(List.of("class"), plan.partitionColumns(), text);
    assertEquals(178, plan.tableRead().rows(), text);
    assertTrue(text.contains("columnar: the passes read the table scan's columnar batches"), text);
    assertTrue(text.contains(t + " (iceberg)"), text);

    JobPlan filtered = JobRunner.plan(spark, TableInputs.settings("input.table = \"" + t + "\"\n"
        + "input.where = \"alcohol > 13\""));
    assertFalse(filtered.tableRead().columnar(), filtered.describe());
    assertTrue(filtered.describe().contains("rows, not columnar: input.where is evaluated above the scan"),
        filtered.describe());
  }
}
