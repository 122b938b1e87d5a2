package io.eigenmill.plan;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * What {@code plan} shows of {@code input.where}, from Spark's planning of the filtered input: a table partitioned by
 * {@code date} (3 dates, 50 rows and 2 files each) with a {@code region} column. The outside reference is the
 * table's folders and files as listed on disk by the test, and the rows the test wrote.
 */
class InputSelectionTest extends SparkSuite {
  static final String[] DATES = {"2026-11-01", "2026-11-02", "2026-11-03"};
  private static Path dir;
  private static Path table;

  @BeforeAll
  static void write() {
    dir = JobFiles.scratch("selection");
    table = dir.resolve("t");
    StructType schema = new StructType().add("date", DataTypes.StringType).add("region", DataTypes.StringType)
        .add("x", DataTypes.DoubleType).add("y", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    for (String date : DATES) {
      for (int i = 0; i < 50; i++) {
        rows.add(RowFactory.create(date, i % 2 == 0 ? "eu" : "us", i * 0.5, Math.sin(i)));
      }
    }
    spark.createDataFrame(rows, schema).repartition(2).write().partitionBy("date").parquet(table.toString());
  }

  private static long filesIn(String... dates) throws Exception {
    long n = 0;
    for (String date : dates) {
      try (Stream<Path> files = Files.list(table.resolve("date=" + date))) {
        n += files.filter(p -> p.getFileName().toString().endsWith(".parquet")).count();
      }
    }
    return n;
  }

  private static JobPlan plan(String where) {
    return Planner.plan(spark, JobFiles.settings("input.path = \"" + table + "\"\ninput.where = \"" + where
        + "\"\noutput.path = \"" + dir.resolve("never") + "\"\n"));
  }

  /** The date predicate keeps the folders of 2 dates of 3: plan lists those 2 only, their files and rows. */
  @Test
  void planListsOnlyTheKeptDatePartitions() throws Exception {
    Path f = dir.resolve("dates.conf");
    Files.writeString(f, "input.path = \"" + table + "\"\ninput.where = \"date >= '2026-11-02'\"\noutput.path = \""
        + dir.resolve("never") + "\"\n");
    CommandRun o = CommandRun.of("plan", f.toString());
    assertEquals(0, o.code(), o.err());
    assertTrue(o.out().contains("where:           date >= '2026-11-02'\n"), o.out());
    assertTrue(o.out().contains("partitions kept: 2 of 3: date=2026-11-02, date=2026-11-03\n"), o.out());
    assertTrue(o.out().contains("files kept:      " + filesIn(DATES[1], DATES[2]) + " of " + filesIn(DATES) + "\n"),
        "files counted on disk by the test: " + o.out());
    assertTrue(o.out().contains(", 100 rows (footers, kept files)"), "2 dates of 50 rows written: " + o.out());
    assertFalse(o.out().contains("2026-11-01"), o.out());
    assertFalse(o.out().contains("row filter:"), "a partition predicate filters no row: " + o.out());
    assertFalse(Files.exists(dir.resolve("never")), "plan writes nothing");
  }

  /** A data-column predicate keeps every folder and says that the passes read rows above Spark's row filter. */
  @Test
  void aDataColumnPredicateIsShownAsARowFilter() throws Exception {
    JobPlan p = plan("region = 'eu' and date = '2026-11-03'");
    InputSelection s = p.selection();
    assertEquals(List.of("date=2026-11-03"), s.partitions());
    assertEquals(3, s.totalPartitions());
    assertEquals(filesIn(DATES[2]), s.files().size(), "files on disk under date=2026-11-03");
    assertEquals(List.of("region"), s.dataColumns());
    assertFalse(s.columnar(), "Spark's row filter sits above the scan");
    assertTrue(s.columnarUnfiltered());
    assertEquals(50, p.rowEstimate(), "the kept folder's 50 rows, before the row filter");
    assertTrue(p.describe().contains("row filter:      on data column region: Spark skips Parquet row groups by"
        + " their statistics and filters the rows above the scan, so the passes read rows, not the scan's columnar"
        + " batches; the row estimate counts the kept files' rows before this filter\n"), p.describe());
  }

  /** A predicate that keeps every folder, and a plan without one. */
  @Test
  void noPruningAndNoPredicate() {
    InputSelection s = plan("x >= 0").selection();
    assertEquals(3, s.partitions().size());
    assertEquals(List.of("x"), s.dataColumns());
    JobPlan unfiltered = Planner.plan(spark, JobFiles.settings("input.path = \"" + table + "\"\noutput.path = \""
        + dir.resolve("never") + "\"\n"));
    assertEquals(null, unfiltered.selection());
    assertEquals(150, unfiltered.rowEstimate(), "3 dates of 50 rows written");
    assertFalse(unfiltered.describe().contains("where:"));
  }
}
