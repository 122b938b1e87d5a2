package io.eigenmill.bench;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * The cases of the main benchmark, in the order they run, each with the words that say exactly what its clock
 * covers. A case's clock never covers planning, table generation or the preparation other cases share (the model
 * for apply, the scores table for k-means): those run once, untimed, before the first case that needs them.
 */
public enum BenchCase {
  SQL_SUM("sql-sum", "Spark SQL `df.agg(sum(c1), ..., sum(cd))` over the feature columns, collected"),
  READ_FLOOR("read-floor", "Spark's columnar Parquet batches of the features (`FeatureInput.columnarBatches()`), "
      + "every column summed in a tight loop, no Row objects"),
  FIT_COVARIANCE("fit-covariance", "`FitJob.execute` of a planned covariance job (k = 10, standardize): every pass "
      + "and the driver-side decomposition; no output written"),
  FIT_TSQR("fit-tsqr", "`FitJob.execute`, method tsqr, otherwise as fit-covariance"),
  FIT_RANDOMIZED("fit-randomized", "`FitJob.execute`, method randomized (2 power iterations, oversample 10), "
      + "otherwise as fit-covariance"),
  BUILTIN_PCA("builtin-pca", "the engine's `VectorAssembler` + `ml.feature.PCA(k = 10).fit` on the same features, "
      + "with whole-stage code generation off (the engine's faster setting on this table)"),
  WRITE_FLOOR("write-floor", "a plain Parquet write of the keys and k + 4 generated columns (rows and columns of the "
      + "scores, partitioned like them); reads the key columns it writes"),
  APPLY_PASS("apply-pass", "the scoring pass alone (`ScoringPass`, k = 10) and the scores Parquet write"),
  APPLY("apply", "`JobRunner.run` with `apply.model`: model read, scoring pass, scores write, monitoring summary "
      + "(from the pass's accumulators), summary.json and report.html, atomic commit"),
  KMEANS("kmeans", "`ClusterJob` on the cached scores table (pc_1..pc_10): k = 8, 10 iterations, seed 1, "
      + "3 restarts side by side in the same passes (the default), "
      + "including its own block cache"),
  BUILTIN_KMEANS("builtin-kmeans", "`VectorAssembler` + `ml.clustering.KMeans(k = 8, maxIter 10, seed 1).fit` on the "
      + "same cached scores table, including its own instance cache");

  private final String word;
  private final String timed;

  BenchCase(String word, String timed) {
    this.word = word;
    this.timed = timed;
  }

  /** The name used by {@code --cases} and in the results. */
  public String word() {
    return word;
  }

  /** What the clock of this case covers. */
  public String timed() {
    return timed;
  }

  /** True for the cases that need a fitted model (apply, scores, k-means). */
  boolean needsModel() {
    return ordinal() >= WRITE_FLOOR.ordinal();
  }

  /** True for the cases that run on the scores table. */
  boolean needsScores() {
    return this == KMEANS || this == BUILTIN_KMEANS;
  }

  /** The case named {@code word}; the message lists the valid names. */
  public static BenchCase of(String word) {
    for (BenchCase c : values()) {
      if (c.word.equals(word.trim().toLowerCase(Locale.ROOT))) {
        return c;
      }
    }
    throw new IllegalArgumentException("--cases: unknown case '" + word + "'; valid cases: " + String.join(", ",
        words(List.of(values()))));
  }

  static List<String> words(List<BenchCase> cases) {
    List<String> out = new ArrayList<>();
    for (BenchCase c : cases) {
      out.add(c.word);
    }
    return out;
  }
}
