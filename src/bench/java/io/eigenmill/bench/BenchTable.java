package io.eigenmill.bench;

import java.util.List;

/**
 * A generated fleet table the benchmark runs on.
 *
 * @param path the Parquet folder (partitioned by {@code date})
 * @param features the d numeric feature columns, in table order
 * @param keys the key columns copied to row outputs
 * @param spec the generator specification it was written from
 * @param generatedSeconds seconds spent generating it in this run; 0 when an existing table was reused
 */
public record BenchTable(String path, long rows, List<String> features, List<String> keys, String spec,
    double generatedSeconds) {

  public int d() {
    return features.size();
  }
}
