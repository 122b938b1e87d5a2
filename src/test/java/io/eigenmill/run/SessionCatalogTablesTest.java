package io.eigenmill.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.util.List;
import org.apache.spark.sql.SparkSession;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Row outputs written as Spark's own Parquet tables (session catalog): created partitioned like the input, appended
 * to, and with overwrite-partitions only the run's partitions replaced, the session's own setting left as it was.
 * Source of every check: the input Parquet folder, read independently with Spark SQL.
 */
class SessionCatalogTablesTest extends SparkSuite {
  private static TableRuns runs;
  private static String database;

  @BeforeAll
  static void table() {
    runs = new TableRuns(spark);
    database = "eigenmill_tables_" + Long.toHexString(System.nanoTime());
    spark.sql("CREATE DATABASE " + database + " LOCATION '" + JobFiles.scratch("warehouse").toUri() + "'");
  }

  private static SparkSession fresh() {
    return spark.newSession();
  }

  @Test
  void appendThenOverwritePartitions() throws Exception {
    String prefix = "spark_catalog." + database + ".fleet_";
    String table = prefix + "scores";
    String before = spark.conf().get("spark.sql.sources.partitionOverwriteMode");
    CommandRun first = runs.run(prefix, "append");
    assertEquals(0, first.code(), first.err());
    // the same (host, region) rows as the input (source: the input folder), in a Parquet table partitioned by region
    assertEquals(IcebergTablesTest.rows(runs.inputKeys(spark, "")),
        IcebergTablesTest.rows(fresh().sql("SELECT host, region FROM " + table)));
    List<String> partitions = IcebergTablesTest.rows(fresh().sql("SHOW PARTITIONS " + table));
    assertEquals(List.of("[region=east]", "[region=north]", "[region=south]", "[region=west]"), partitions);
    assertTrue(fresh().sql("DESCRIBE TABLE EXTENDED " + table).filter("col_name = 'Provider'").first().getString(1)
        .equalsIgnoreCase("parquet"));
    CommandRun second = runs.run(prefix, "append", "input.where = \"region = 'north'\"");
    assertEquals(0, second.code(), second.err());
    long north = runs.inputKeys(spark, "region = 'north'").count();
    assertEquals(2 * north, fresh().sql("SELECT * FROM " + table + " WHERE region = 'north'").count());
    List<String> others = IcebergTablesTest.rows(fresh().sql("SELECT * FROM " + table + " WHERE region <> 'north'"));
    CommandRun run = runs.run(prefix, "overwrite-partitions", "input.where = \"region = 'north'\"");
    assertEquals(0, run.code(), run.err());
    assertEquals(others, IcebergTablesTest.rows(fresh().sql("SELECT * FROM " + table + " WHERE region <> 'north'")));
    assertEquals(IcebergTablesTest.rows(runs.inputKeys(spark, "region = 'north'")),
        IcebergTablesTest.rows(fresh().sql("SELECT host, region FROM " + table + " WHERE region = 'north'")));
    // the caller's session keeps its partition overwrite setting (Spark's default: static)
    assertEquals(before, spark.conf().get("spark.sql.sources.partitionOverwriteMode"));
  }
}
