package io.eigenmill.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.testing.ChildJvm;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.FleetTables;
import io.eigenmill.testing.SparkSuite;
import io.eigenmill.testing.TableCatalog;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;

/**
 * Row outputs written as Iceberg tables (output.table-prefix): rows and keys as the input's, partitions replaced by
 * overwrite-partitions, fail-if-exists refusing before any commit, a failed second commit naming the first, and a
 * run killed before its commit leaving the history as it was.
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

  /**
   * A run killed (SIGKILL, a separate JVM) while it writes its scores into the staging folder, before any table
   * commit: the table's snapshot history is what it was, and output.path was never created. The tables are
   * committed only after every folder output is staged (RowTables), so the kill always lands before them.
   */
  @Test
  void aRunKilledBeforeItsCommitLeavesTheHistory() throws Exception {
    String prefix = TableCatalog.freshNamespace() + ".fleet_";
    String table = prefix + "scores";
    assertEquals(0, runs.run(prefix, "append").code());
    List<Long> before = snapshots(table);
    // rows enough that the scores take a while to write, so that the kill falls inside that write
    Path killed = runs.dir.resolve("killed");
    Path input = killed.resolve("input");
    FleetTables.write(spark, input, 300_000, 4, 20261205L);
    Path out = killed.resolve("out");
    Path job = FleetTables.fitJob(killed, input, "output.path = \"" + out + "\"", "output.scores = true",
        "reduce.components = 2", "output.table-prefix = \"" + prefix + "\"", "output.table-mode = append",
        "spark.conf { \"spark.sql.catalog.lake\" = \"org.apache.iceberg.spark.SparkCatalog\", "
            + "\"spark.sql.catalog.lake.type\" = hadoop, \"spark.sql.catalog.lake.warehouse\" = \""
            + TableCatalog.warehouse().toUri() + "\" }");
    List<String> cmd = ChildJvm.command("run", job.toString());
    Path log = killed.resolve("run.log");
    Process p = new ProcessBuilder(cmd).redirectErrorStream(true).redirectOutput(log.toFile()).start();
    Path staging = null;
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(240);
    while (staging == null && p.isAlive() && System.nanoTime() < deadline) {
      staging = stagedScores(killed);
      Thread.sleep(10);
    }
    p.destroyForcibly();
    assertTrue(p.waitFor(60, TimeUnit.SECONDS));
    assertTrue(staging != null, "the run began to write its scores before it was killed:\n" + Files.readString(log));
    assertFalse(Files.exists(staging.resolve("summary.json")), "killed before its summary (written after the tables)");
    assertEquals(before, snapshots(table), "the table's snapshot history is unchanged");
    assertFalse(Files.exists(out), "nothing was committed to output.path");
  }

  /** The staging folder of a run into {@code dir}/out once it holds scores/, or null. */
  private static Path stagedScores(Path dir) throws IOException {
    try (Stream<Path> siblings = Files.list(dir)) {
      return siblings.filter(f -> f.getFileName().toString().startsWith(".out.staging-"))
          .filter(f -> Files.exists(f.resolve("scores"))).findFirst().orElse(null);
    }
  }
}
