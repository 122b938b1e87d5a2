package io.eigenmill.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.SparkSuite;
import io.eigenmill.testing.TableCatalog;
import java.nio.file.Files;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;

/**
 * Row outputs written as Iceberg tables (output.table-prefix): rows and keys as the input's, partitions replaced by
 * overwrite-partitions, fail-if-exists refusing before any commit, and a failed second commit naming the first.
 * Source of every check: the input Parquet folder and the tables' own history, read independently with Spark SQL.
 */
@Tag(TableCatalog.TAG)
class IcebergTablesTest extends SparkSuite {
  private static TableRuns runs;

  @BeforeAll
  static void table() {
    runs = new TableRuns(spark);
  }

  /**
   * A session of its own for every read after a run: its catalog has no cached copy of a table (a cached Iceberg
   * table would show the snapshot it was loaded at, not the run's).
   */
  private static SparkSession fresh() {
    return spark.newSession();
  }

  private static List<Long> snapshots(String table) {
    return fresh().sql("SELECT snapshot_id FROM " + table + ".snapshots ORDER BY committed_at").collectAsList()
        .stream().map(r -> r.getLong(0)).toList();
  }

  /** The rows of {@code d}, each as text, sorted: two tables hold the same rows when these lists are equal. */
  static List<String> rows(Dataset<Row> d) {
    return d.collectAsList().stream().map(Row::toString).sorted().toList();
  }

  @Test
  void scoresAppendedAsATablePartitionedLikeTheInput() throws Exception {
    String prefix = TableCatalog.freshNamespace() + ".fleet_";
    CommandRun run = runs.run(prefix, "append");
    assertEquals(0, run.code(), run.err());
    String table = prefix + "scores";
    // source: the input table itself, read with Spark SQL: the same rows, the same (host, region) multiset
    assertEquals(runs.inputKeys(spark, "").count(), fresh().table(table).count());
    assertEquals(rows(runs.inputKeys(spark, "")), rows(fresh().sql("SELECT host, region FROM " + table)));
    // partitioned like the input folder (region); the table's partition spec, read from Iceberg's metadata table
    List<Row> partitions = fresh().sql("SELECT partition.region FROM " + table + ".partitions").collectAsList();
    assertEquals(4, partitions.size());
    // one commit, tagged with the run; summary.json names it
    List<Long> history = snapshots(table);
    assertEquals(1, history.size());
    String runId = fresh().sql("SELECT summary['eigenmill.run-id'] FROM " + table + ".snapshots").first().getString(0);
    assertFalse(runId == null || runId.isBlank());
    JsonNode tables = new ObjectMapper().readTree(Files.readString(runs.lastOutput().resolve("summary.json")))
        .get("tables");
    assertEquals(1, tables.size());
    assertEquals(table, tables.get(0).get("table").asText());
    assertEquals("append", tables.get(0).get("mode").asText());
    assertEquals(400, tables.get(0).get("rows").asLong());
    assertEquals((long) history.get(0), tables.get(0).get("snapshot_id").asLong());
  }

  @Test
  void overwritePartitionsReplacesExactlyTheRunsPartitions() throws Exception {
    String prefix = TableCatalog.freshNamespace() + ".fleet_";
    String table = prefix + "scores";
    assertEquals(0, runs.run(prefix, "append").code());
    // north twice, so that a replacement of north is visible in its count
    assertEquals(0, runs.run(prefix, "append", "input.where = \"region = 'north'\"").code());
    List<String> othersBefore = rows(fresh().sql("SELECT * FROM " + table + " WHERE region <> 'north'"));
    assertEquals(2 * runs.inputKeys(spark, "region = 'north'").count(),
        fresh().sql("SELECT * FROM " + table + " WHERE region = 'north'").count());
    CommandRun run = runs.run(prefix, "overwrite-partitions", "input.where = \"region = 'north'\"");
    assertEquals(0, run.code(), run.err());
    // the other partitions, row by row, as before; north once more, with the input's keys (source: the input)
    assertEquals(othersBefore, rows(fresh().sql("SELECT * FROM " + table + " WHERE region <> 'north'")));
    assertEquals(rows(runs.inputKeys(spark, "region = 'north'")),
        rows(fresh().sql("SELECT host, region FROM " + table + " WHERE region = 'north'")));
    assertEquals(3, snapshots(table).size());
  }

  @Test
  void failIfExistsRefusesASecondRunAndLeavesTheHistory() throws Exception {
    String prefix = TableCatalog.freshNamespace() + ".fleet_";
    String table = prefix + "scores";
    assertEquals(0, runs.run(prefix, "fail-if-exists").code());
    List<Long> before = snapshots(table);
    CommandRun second = runs.run(prefix, "fail-if-exists");
    assertEquals(2, second.code(), second.err());
    assertTrue(second.err().contains("output.table-mode = fail-if-exists") && second.err().contains(table),
        second.err());
    assertEquals(before, snapshots(table));
    assertFalse(Files.exists(runs.lastOutput()));
  }

  @Test
  void failIfExistsChecksEveryTableBeforeWritingAny() throws Exception {
    String prefix = TableCatalog.freshNamespace() + ".fleet_";
    // only the second table of the run exists: the first (scores) must not be created either
    spark.sql("CREATE TABLE " + prefix + "assignments (other STRING) USING iceberg");
    CommandRun run = runs.run(prefix, "fail-if-exists", "cluster.enabled = true", "cluster.k = 3");
    assertEquals(2, run.code(), run.err());
    assertTrue(run.err().contains(prefix + "assignments"), run.err());
    assertFalse(fresh().catalog().tableExists(prefix + "scores"));
    assertEquals(List.of(), snapshots(prefix + "assignments"));
  }

  @Test
  void aFailedSecondCommitNamesTheFirstTablesSnapshot() throws Exception {
    String prefix = TableCatalog.freshNamespace() + ".fleet_";
    // an assignments table the run's rows cannot be appended to (another schema): its commit fails after the scores'
    spark.sql("CREATE TABLE " + prefix + "assignments (other STRING) USING iceberg");
    spark.sql("INSERT INTO " + prefix + "assignments VALUES ('kept')");
    List<Long> assignmentsBefore = snapshots(prefix + "assignments");
    CommandRun run = runs.run(prefix, "append", "cluster.enabled = true", "cluster.k = 3");
    assertEquals(1, run.code(), run.err());
    List<Long> scores = snapshots(prefix + "scores");
    assertEquals(1, scores.size());
    assertTrue(run.err().contains("writing table " + prefix + "assignments failed")
        && run.err().contains(prefix + "scores snapshot " + scores.get(0)), run.err());
    assertEquals(assignmentsBefore, snapshots(prefix + "assignments"));
    // the run failed: no output folder
    assertFalse(Files.exists(runs.lastOutput()));
  }
}
