package io.eigenmill.testing;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.List;
import org.apache.spark.sql.Row;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;

/** The test catalog works on this Spark line: a table written through it reads back with its rows and history. */
@Tag(TableCatalog.TAG)
class TableCatalogTest extends SparkSuite {
  @Test
  void writesAndReadsBackWithHistory() throws Exception {
    String table = TableCatalog.freshNamespace() + ".probe";
    spark.range(10).toDF("id").writeTo(table).using("iceberg").create();
    spark.range(10, 15).toDF("id").writeTo(table).append();
    // two commits, so two snapshots (Iceberg keeps one per commit: common practice, no source)
    List<Row> snapshots = spark.sql("SELECT snapshot_id FROM " + table + ".snapshots").collectAsList();
    assertEquals(2, snapshots.size());
    long first = snapshots.get(0).getLong(0);
    assertEquals(15L, spark.table(table).count());
    assertEquals(10L, spark.read().option("snapshot-id", first).table(table).count());
  }
}
