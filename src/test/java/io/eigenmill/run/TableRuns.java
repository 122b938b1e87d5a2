package io.eigenmill.run;

import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.FleetTables;
import io.eigenmill.testing.JobFiles;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/** A small fleet table partitioned by region, and runs of fit jobs on it that also write catalog tables. */
final class TableRuns {
  final Path dir = JobFiles.scratch("tables");
  final Path input = dir.resolve("input");
  private int runs;

  TableRuns(SparkSession spark) {
    Path flat = dir.resolve("flat");
    FleetTables.write(spark, flat, 400, 2, 20261204L);
    spark.read().parquet(flat.toString()).write().partitionBy("region").parquet(input.toString());
  }

  /** Runs a fit with scores on the table and {@code lines}, each run into its own output folder. */
  CommandRun run(String prefix, String mode, String... lines) throws IOException {
    Path job = dir.resolve("run-" + (++runs));
    Files.createDirectories(job);
    List<String> all = new ArrayList<>(List.of("output.path = \"" + job.resolve("out") + "\"",
        "output.scores = true", "reduce.components = 2", "output.table-prefix = \"" + prefix + "\"",
        "output.table-mode = " + mode));
    all.addAll(List.of(lines));
    return CommandRun.of("run", FleetTables.fitJob(job, input, all.toArray(String[]::new)).toString());
  }

  /** The output folder of the latest run. */
  Path lastOutput() {
    return dir.resolve("run-" + runs).resolve("out");
  }

  /** The input's (host, region) pairs, read with Spark SQL straight from the Parquet folder. */
  Dataset<Row> inputKeys(SparkSession spark, String where) {
    return spark.sql("SELECT host, region FROM parquet.`" + input + "`" + (where.isEmpty() ? "" : " WHERE " + where));
  }
}
