package io.eigenmill.jobs;

import java.util.List;

/**
 * Hotelling T2 and Q (squared prediction error) of scored rows, their control limits and what they flagged.
 *
 * @param t2LimitRule how the T2 limit was computed, in words (F distribution for new rows, beta for fitted rows)
 * @param qLimitRule how the Q limit was computed (Jackson and Mudholkar 1979; with all discarded eigenvalues or
 *     from trace identities)
 * @param series T2 and Q along row order or time, a bounded sample for plotting
 * @param top the rows with the largest Q or T2 relative to their limits, with the features that drive their Q
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
    Series series,
    List<FlaggedRow> top) {

  /** Plot points: {@code position} is seconds since the epoch when {@code positionLabel} is a time column. */
  public record Series(String positionLabel, double[] position, double[] t2, double[] q) {}

  public record FlaggedRow(List<String> keys, double t2, double q, boolean flaggedT2, boolean flaggedQ,
      List<Contribution> qContributions) {}

  /** A feature's share of a row's Q: its squared residual in prepared (centred, scaled) units. */
  public record Contribution(String feature, double value) {}
}
