package io.eigenmill.bench;

import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.ScoringPass;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.DataFrameWriter;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/**
 * The scoring pass alone, as the apply job runs it (same scorer, block size, missing-value policy and control
 * limits for new rows), writing the scores Parquet partitioned like the input: no model read, no monitoring
 * summary, no report, no staging folder.
 */
final class Scores {
  private Scores() {}

  /** Scores {@code table} into {@code path} (overwritten) and returns the rows scored. */
  static long write(SparkSession spark, Dataset<Row> table, List<String> keys, PcaModel model,
      JobSettings settings, String path) {
    ScoringPass.Limits limits = ScoringPass.Limits.of(model, settings.monitor(), false);
    ScoringPass.Spec spec = ScoringPass.spec(model, settings, limits, false);
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "benchmark scores", spec,
        20);
    List<String> partitions = List.of(BenchTables.PARTITION_COLUMN);
    ScoringPass.Scored scored = ScoringPass.apply(table, keys, partitions, spec, counters);
    DataFrameWriter<Row> writer = scored.rows().write().mode("overwrite");
    if (List.of(scored.rows().columns()).contains(BenchTables.PARTITION_COLUMN)) {
      writer = writer.partitionBy(BenchTables.PARTITION_COLUMN);
    }
    writer.parquet(path);
    return counters.scored().value();
  }

  /** The score columns pc_1..pc_k. */
  static List<String> columns(int k) {
    List<String> out = new ArrayList<>();
    for (int c = 1; c <= k; c++) {
      out.add("pc_" + c);
    }
    return out;
  }
}
