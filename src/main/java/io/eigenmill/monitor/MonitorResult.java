package io.eigenmill.monitor;

import java.util.List;

/**
 * Hotelling T2 and Q (squared prediction error) of scored rows, their control limits and what they flagged.
 *
 * @param t2LimitRule how the T2 limit was computed, in words (F distribution for new rows, beta for fitted rows)
 * @param qLimitRule how the Q limit was computed, in words (Jackson and Mudholkar 1979 or Box 1954, why, and from
 *     all discarded eigenvalues or from trace identities)
 * @param qRule the Q rule applied: {@code jackson-mudholkar}, {@code box}, or {@code none} (nothing discarded)
 * @param qH0 Jackson and Mudholkar's h0 of the discarded eigenvalues (NaN when nothing is discarded)
 * @param fittedRows true when the scored rows are the rows the model was fitted on
 * @param series T2 and Q per time bucket (with the bucket's row and flagged counts), or along a sample of rows
 * @param topColumns the columns of each top row's {@code keys}
 * @param top the rows with the largest Q or T2 relative to their limits, with the features that drive their Q
 * @param warnings flagged shares far above 1 - confidence ({@code io.eigenmill.monitor.math.ControlLimits#flaggedAbove})
 */
public record MonitorResult(
    double confidence,
    int k,
    long rowsScored,
    long flaggedT2,
    long flaggedQ,
    long flaggedBoth,
    double t2Limit,
    String t2LimitRule,
    double qLimit,
    String qLimitRule,
    String qRule,
    double qH0,
    boolean fittedRows,
    Series series,
    List<String> topColumns,
    List<FlaggedRow> top,
    List<String> warnings,
    long unknownGroupRows,
    List<String> unknownGroups) {

  public MonitorResult(double confidence, int k, long rowsScored, long flaggedT2, long flaggedQ, long flaggedBoth,
      double t2Limit, String t2LimitRule, double qLimit, String qLimitRule, String qRule, double qH0,
      boolean fittedRows, Series series, List<String> topColumns, List<FlaggedRow> top, List<String> warnings) {
    this(confidence, k, rowsScored, flaggedT2, flaggedQ, flaggedBoth, t2Limit, t2LimitRule, qLimit, qLimitRule, qRule,
        qH0, fittedRows, series, topColumns, top, warnings, 0, List.of());
  }

  /**
   * Plot points: {@code position} is seconds since the epoch when {@code positionLabel} is a time column. Per time
   * bucket: {@code t2}, {@code q} are the bucket's maxima, {@code rows} its rows and {@code flaggedT2},
   * {@code flaggedQ} its rows above each limit; for a row sample (no time column) {@code t2}, {@code q} are each
   * sampled row's values and the three count arrays are empty.
   */
  public record Series(String positionLabel, double[] position, double[] t2, double[] q, long[] rows,
      long[] flaggedT2, long[] flaggedQ) {

    /** A series of sampled rows (no counts). */
    public static Series ofRows(String positionLabel, double[] position, double[] t2, double[] q) {
      return new Series(positionLabel, position, t2, q, new long[0], new long[0], new long[0]);
    }

    /** True when the points are time buckets with counts, false for a row sample. */
    public boolean buckets() {
      return rows.length > 0 && rows.length == position.length;
    }
  }

  public record FlaggedRow(List<String> keys, double t2, double q, boolean flaggedT2, boolean flaggedQ,
      List<Contribution> qContributions) {}

  /** A feature's share of a row's Q: its squared residual in prepared (centred, scaled) units. */
  public record Contribution(String feature, double value) {}
}
