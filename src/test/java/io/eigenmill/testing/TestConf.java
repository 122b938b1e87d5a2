package io.eigenmill.testing;

import org.apache.spark.SparkConf;

/**
 * The Spark configuration of the tests: local[2] on loopback, UI off, few shuffle partitions, and the Iceberg catalog
 * of the table tests ({@link TableCatalog}).
 */
public final class TestConf {
  private TestConf() {}

  public static SparkConf conf() {
    return new SparkConf()
        .setMaster("local[2]")
        .setAppName("eigenmill-tests")
        .set("spark.ui.enabled", "false")
        .set("spark.driver.host", "127.0.0.1")
        .set("spark.driver.bindAddress", "127.0.0.1")
        .set("spark.sql.shuffle.partitions", "4")
        .set("spark.sql.codegen.maxFields", "10000")
        .set("spark.sql.session.timeZone", "UTC")
        // the table tests' catalog: Iceberg over a file-system warehouse (TableCatalog); no SQL extensions, so the
        // engine's own parser and messages stay those of plain Spark
        .set("spark.sql.catalog." + TableCatalog.NAME, "org.apache.iceberg.spark.SparkCatalog")
        .set("spark.sql.catalog." + TableCatalog.NAME + ".type", "hadoop")
        .set("spark.sql.catalog." + TableCatalog.NAME + ".warehouse", TableCatalog.warehouse().toUri().toString());
  }
}
