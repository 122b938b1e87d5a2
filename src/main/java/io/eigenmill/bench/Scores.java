package io.eigenmill.bench;

import io.eigenmill.jobs.PcaModel;
import io.eigenmill.math.ControlLimits;
import io.eigenmill.math.Scorer;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.spark.ScoringPass;
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
    int k = model.k();
    double confidence = settings.monitor().confidence();
    double t2Limit = ControlLimits.t2New(k, model.rows(), confidence);
    double qLimit = ControlLimits.q(ControlLimits.thetas(model.eigenvalues(), k, model.eigenvaluesComplete(),
        model.d(), model.totalVariance()), confidence);
    List<String> partitions = List.of(BenchTables.PARTITION_COLUMN);
    List<String> passThrough = ScoringPass.passThrough(table.schema(), keys, partitions);
    Scorer scorer = new Scorer(model.means(), model.scales(), model.loadings(), model.eigenvalues(), k);
    ScoringPass.Spec spec = new ScoringPass.Spec(scorer, passThrough.size(), model.features(),
        settings.reduce().blockRows(), settings.prepare().missing(), model.means(), t2Limit, qLimit, false);
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "benchmark scores",
        model.d(), 20);
    DataFrameWriter<Row> writer = ScoringPass.apply(table, passThrough, spec, counters).write().mode("overwrite");
    if (passThrough.contains(BenchTables.PARTITION_COLUMN)) {
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
