package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.record.RunResult;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Spark's own file-based tables ({@code spark_catalog}) as input ({@code input.table}), and the bad inputs of the
 * table keys: each one message and exit code 2, nothing written. No Iceberg here, so every Spark line runs it.
 */
class FileTableInputTest extends SparkSuite {
  private static Path dir;
  private static Path folder;
  private static final String TABLE = "spark_catalog.default.wine_input_t";

  @BeforeAll
  static void tables() throws Exception {
    dir = Files.createTempDirectory("eigenmill-file-table");
    Dataset<Row> wine = TableInputs.rows(spark).coalesce(1);
    folder = dir.resolve("folder");
    wine.write().parquet(folder.toString());
    // an external table of the session catalog: its files under the test's folder, not the session's warehouse
    spark.sql("DROP TABLE IF EXISTS " + TABLE);
    wine.write().format("parquet").option("path", dir.resolve("table").toString()).saveAsTable(TABLE);
  }

  @AfterAll
  static void clean() {
    spark.sql("DROP TABLE IF EXISTS " + TABLE);
    LoopbackCluster.deleteTree(dir);
  }

  @Test
  void sessionCatalogTableFitsAsTheFolderDoes() throws Exception {
    RunResult fromFolder = TableInputs.fit(spark, "input.path = \"" + folder + "\"");
    RunResult fromTable = TableInputs.fit(spark, "input.table = \"" + TABLE + "\"");
    Spectrum a = fromFolder.fit().spectrum();
    Spectrum b = fromTable.fit().spectrum();
    // the same rows in the same single file, read by the same Parquet scan: the same blocks, so bit for bit
    assertArrayEquals(a.eigenvalues(), b.eigenvalues(), 0.0);
    assertArrayEquals(a.loadings(), b.loadings(), 0.0);
    TableInputs.matchesR(b);
    assertTrue(fromTable.fit().columnarRead(), "a Parquet table of the session catalog is read as columnar batches");
  }

  private record Result(int code, String out, String err, Path output) {}

  private static Result run(String name, String input) throws Exception {
    Path output = dir.resolve("out-" + name);
    Path job = dir.resolve(name + ".conf");
    Files.writeString(job, input + "\nfeatures.columns = [alcohol, ash]\noutput.path = \"" + output + "\"\n");
    CommandRun r = CommandRun.of("run", job.toString());
    return new Result(r.code(), r.out(), r.err(), output);
  }

  /** Exit code 2, one error line (the product's contract, README "Command line") holding {@code message}. */
  private static void rejected(Result r, String message) {
    assertEquals(2, r.code(), r.err());
    assertEquals(1, r.err().lines().count(), r.err());
    assertTrue(r.err().startsWith("eigenmill: error: "), r.err());
    assertTrue(r.err().contains(message), r.err());
    assertTrue(Files.notExists(r.output()), "nothing written");
  }

  @Test
  void bothKeys() throws Exception {
    rejected(run("both", "input.path = \"" + folder + "\"\ninput.table = \"" + TABLE + "\""),
        "input.path = " + folder + " and input.table = " + TABLE + " are both set");
  }

  @Test
  void neitherKey() throws Exception {
    rejected(run("neither", ""), "input.path and input.table are both empty: set exactly one");
  }

  @Test
  void missingTable() throws Exception {
    rejected(run("missing", "input.table = \"spark_catalog.default.no_such_wine\""),
        "input.table = spark_catalog.default.no_such_wine: no such table in the session's catalogs");
  }

  @Test
  void malformedAsOf() throws Exception {
    rejected(run("malformed", "input.table = \"" + TABLE + "\"\ninput.as-of = \"last tuesday\""),
        "input.as-of = last tuesday: not a snapshot id (digits only, e.g. 4923180334123) nor a time");
  }

  @Test
  void asOfOnATableWithoutHistory() throws Exception {
    rejected(run("nohistory", "input.table = \"" + TABLE + "\"\ninput.as-of = 1"),
        "input.as-of = 1: input.table = " + TABLE + " (parquet) keeps no history");
  }
}
