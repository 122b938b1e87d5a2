package io.eigenmill.api;

import io.eigenmill.record.RunResult;
import io.eigenmill.run.GivenRuns;
import io.eigenmill.record.SummaryJson;
import java.util.Map;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;

/**
 * What one job called through {@link Eigenmill} produced.
 *
 * <p>Written mode ({@code output.path} set): the job ran as the command line runs it and committed its folder;
 * {@link #scores} and {@link #clusters} read the written tables (lazily: a Parquet scan, nothing read until the
 * caller acts). Lazy mode (no {@code output.path}): {@link #scores} is a Dataset that scores the rows when the
 * caller acts on it, each time it does (cache it to score once); nothing is written.
 *
 * @param run the run record (what {@code summary.json} and the report are made from); null for a lazy apply, which
 *     computes nothing before the caller acts
 * @param model the fitted or applied model as plain values
 * @param t2Limit the T2 control limit of the scores (of fitted rows for a fit, of new rows for an apply); NaN for
 *     one model per group (each group has its own)
 * @param qLimit the Q control limit of the scores, likewise (0 when no variance is left out of the model)
 * @param scores keys, then {@code pc_1..pc_k}, {@code t2}, {@code q} (and the flags), as in {@code scores/}; null
 *     when the job writes no scores
 * @param clusters the rows' cluster assignments, as in {@code clusters/assignments}; null without clustering
 * @param outputPath the committed output folder; null in lazy mode
 */
public record JobResult(RunResult run, Model model, double t2Limit, double qLimit, Dataset<Row> scores, Dataset<Row> clusters,
    String outputPath) {

  /** The {@code summary.json} text of the run (in lazy mode, the one the run would have written). */
  public String summaryJson() {
    return run == null ? null : SummaryJson.render(run);
  }

  /** Rows the fit used (after missing-value handling), or rows scored by an apply; -1 for a lazy apply. */
  public long rows() {
    return run == null ? -1 : GivenRuns.rows(run);
  }

  /** Components kept. */
  public int k() {
    return model.k();
  }

  /** Each computed component's share of the total variance. */
  public double[] explainedVarianceShares() {
    return model.explainedVarianceShares();
  }

  /** The computed components' variances. */
  public double[] eigenvalues() {
    return model.eigenvalues();
  }

  /** Seconds per stage, in order, as in {@code summary.json}'s timings; empty for a lazy apply. */
  public Map<String, Double> timings() {
    return run == null ? Map.of() : run.timings();
  }
}
