package io.eigenmill.testing;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/**
 * Synthetic metrics of a fleet of edge cache servers, seeded: three hidden drivers (request load, traffic mix, room
 * heat) plus noise behind ten numeric metrics of mixed types, with host and region keys. Written as a Parquet folder
 * with a chosen number of files, so that a job has that many input partitions.
 */
public final class FleetTables {
  /** The numeric columns, in schema order. */
  public static final List<String> METRICS = List.of("cpu_user_pct", "cpu_system_pct", "mem_used_pct",
      "net_rx_gbps", "net_tx_gbps", "disk_read_mbps", "cache_hit_ratio", "temp_inlet_c", "fan1_rpm", "conns_active");

  private FleetTables() {}

  /**
   * Writes {@code dir}/fleet-fit.conf: a fit of the table at {@code table} on its metrics (keys host and region,
   * standardized), one input partition per file (on a cluster and locally alike), plus {@code lines}.
   */
  public static Path fitJob(Path dir, Path table, String... lines) throws IOException {
    List<String> all = new ArrayList<>(List.of(
        "input.path = \"" + table + "\"",
        "features.keys = [host, region]",
        "prepare.scaling = standardize",
        "spark.conf { \"spark.sql.files.openCostInBytes\" = 134217728, \"spark.sql.shuffle.partitions\" = 4 }"));
    all.addAll(List.of(lines));
    all.add("");
    Path job = dir.resolve("fleet-fit.conf");
    Files.writeString(job, String.join("\n", all));
    return job;
  }

  /** Writes {@code rows} rows in {@code files} Parquet files under {@code dir}. */
  public static void write(SparkSession spark, Path dir, int rows, int files, long seed) {
    StructType schema = new StructType().add("host", DataTypes.StringType).add("region", DataTypes.StringType)
        .add("cpu_user_pct", DataTypes.DoubleType).add("cpu_system_pct", DataTypes.DoubleType)
        .add("mem_used_pct", DataTypes.DoubleType).add("net_rx_gbps", DataTypes.DoubleType)
        .add("net_tx_gbps", DataTypes.DoubleType).add("disk_read_mbps", DataTypes.DoubleType)
        .add("cache_hit_ratio", DataTypes.DoubleType).add("temp_inlet_c", DataTypes.DoubleType)
        .add("fan1_rpm", DataTypes.IntegerType).add("conns_active", DataTypes.LongType);
    Random r = new Random(seed);
    String[] regions = {"north", "south", "east", "west"};
    List<Row> out = new ArrayList<>(rows);
    for (int i = 0; i < rows; i++) {
      double load = r.nextGaussian();
      double traffic = r.nextGaussian();
      double heat = r.nextGaussian();
      out.add(RowFactory.create("edge-" + (i % 97), regions[i % 4],
          45 + 12 * load + 3 * traffic + 2 * r.nextGaussian(),
          12 + 3 * load + 1.5 * r.nextGaussian(),
          60 + 4 * load + 3 * r.nextGaussian(),
          8 + 2.5 * traffic + 0.8 * load + 0.5 * r.nextGaussian(),
          3 + 1.2 * traffic + 0.3 * r.nextGaussian(),
          120 + 25 * load - 10 * traffic + 8 * r.nextGaussian(),
          0.9 - 0.02 * traffic + 0.01 * r.nextGaussian(),
          24 + 1.5 * heat + 0.5 * load + 0.3 * r.nextGaussian(),
          (int) Math.round(4200 + 300 * heat + 50 * load + 40 * r.nextGaussian()),
          Math.round(5000 + 900 * traffic + 300 * load + 100 * r.nextGaussian())));
    }
    spark.createDataFrame(out, schema).repartition(files).write().parquet(dir.toString());
  }
}
