package io.eigenmill.report;

import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.monitor.math.ControlLimits;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import org.apache.commons.math3.distribution.BinomialDistribution;

/**
 * Monitoring: T2 and Q along time (per bucket: the share of rows above each limit against the expected
 * 1 - confidence) or along a row sample (each row's value against its limit), the counts the monitor flagged, the
 * limit rules, and the top flagged rows with the features that drive their Q.
 *
 * @param counts rows scored and flagged, as the monitor counted them, and the count limits that hold flag by chance
 * @param limits the two limits with their rules
 * @param time true when positions are seconds since the epoch (see {@link #isTime})
 * @param buckets true when the points are time buckets with counts ({@code rows}, {@code overT2}, {@code overQ});
 *     false when each point is one row ({@code t2}, {@code q} its values)
 * @param t2 per point: the row's T2, or the bucket's maximum T2
 * @param rows rows per bucket (empty for a row series)
 * @param overT2 rows above the T2 limit per bucket (empty for a row series)
 * @param overQ rows above the Q limit per bucket (empty for a row series)
 * @param expected the share of rows a limit that holds flags: 1 - confidence
 * @param caption what a point of the two charts is, in words
 * @param keyNames names of the columns of the top rows' keys, for the table header
 * @param perGroup true when each row was scored against its own group's limits: the series then holds each row's
 *     T2 and Q over its group's limits, and {@code t2Limit}, {@code qLimit} are that ratio's limit, 1
 */
public record MonitoringModel(
    List<Fact> counts,
    List<Fact> limits,
    String positionLabel,
    boolean time,
    boolean buckets,
    double[] position,
    double[] t2,
    double[] q,
    long[] rows,
    long[] overT2,
    long[] overQ,
    double t2Limit,
    double qLimit,
    double expected,
    String confidence,
    String caption,
    List<String> keyNames,
    List<TopRow> top,
    boolean perGroup) {

  /**
   * A bucket is drawn as "more flagged than chance" when its flagged count exceeds the quantile at this probability
   * of Binomial(rows of the bucket, 1 - confidence): with a limit that holds, about one bucket in a thousand.
   */
  static final double BUCKET_CHANCE = 0.999;

  /** Contributions listed per flagged row. */
  static final int CONTRIBUTIONS = 5;

  /** @param contributions the largest Q contributions, largest first */
  public record TopRow(List<String> keys, String t2, String q, String flaggedBy, List<Fact> contributions) {}

  static MonitoringModel of(RunResult run) {
    MonitorResult m = run.monitor();
    if (m == null) {
      return null;
    }
    long[] range = ControlLimits.chanceRange(m.rowsScored(), m.confidence(), ControlLimits.CHANCE_LEVEL);
    List<Fact> counts = List.of(
        new Fact("Rows scored", Fmt.count(m.rowsScored())),
        new Fact("Flagged by T2", Fmt.count(m.flaggedT2())),
        new Fact("Flagged by Q", Fmt.count(m.flaggedQ())),
        new Fact(EXPECTED_LABEL + " (" + Fmt.percent(1 - m.confidence(), 1) + " of rows; "
            + Fmt.percent(ControlLimits.CHANCE_LEVEL, 0) + " range " + Fmt.count(range[0]) + " to "
            + Fmt.count(range[1]) + ")", "about " + Fmt.count(Math.round(m.rowsScored() * (1 - m.confidence())))),
        new Fact("Flagged by both", Fmt.count(m.flaggedBoth())),
        new Fact("Confidence of the limits", Fmt.percent(m.confidence(), 1)),
        new Fact("Components (k)", Fmt.count(m.k())));
    boolean perGroup = "per group".equals(m.qRule());
    List<Fact> limits = new ArrayList<>();
    if (perGroup) {
      // the records' limits are the ratio's limit 1: the limits themselves differ per group (see the groups section)
      limits.add(new Fact("T2 and Q limits", "one pair per group model, each row against its own group's limits"));
      limits.add(new Fact("How", m.t2LimitRule()));
      limits.add(new Fact("In the charts", "each row's T2 and Q divided by its group's limit: 1 is the limit of "
          + "every group"));
    } else {
      limits.add(new Fact("T2 limit", Fmt.num(m.t2Limit()) + " — " + m.t2LimitRule()));
      limits.add(new Fact("Q limit", Fmt.num(m.qLimit()) + " — " + m.qLimitRule()));
    }
    if (m.qRule() != null && !perGroup) {
      limits.add(new Fact("Q rule", m.qRule() + (Double.isNaN(m.qH0()) ? "" : ", h0 = " + Fmt.num(m.qH0(), 3))));
    }
    limits.add(new Fact(AGAINST_CHANCE_LABEL, againstChance(m, range)));
    MonitorResult.Series s = m.series();
    double[] empty = new double[0];
    long[] none = new long[0];
    double[] pos = s == null ? empty : s.position();
    String label = s == null ? "row" : s.positionLabel();
    boolean buckets = s != null && s.buckets();
    List<TopRow> top = new ArrayList<>();
    for (MonitorResult.FlaggedRow r : m.top()) {
      top.add(topRow(r));
    }
    boolean time = isTime(label, pos);
    return new MonitoringModel(counts, List.copyOf(limits), label, time, buckets, pos, s == null ? empty : s.t2(),
        s == null ? empty : s.q(), buckets ? s.rows() : none, buckets ? s.flaggedT2() : none,
        buckets ? s.flaggedQ() : none, m.t2Limit(), m.qLimit(), 1 - m.confidence(), Fmt.percent(m.confidence(), 1),
        caption(m, label, pos.length, buckets, buckets ? s.rows() : none, perGroup), keyNames(run, m), top,
        perGroup);
  }

  /** Label of the card with the count a limit that holds flags, followed by its share and chance range. */
  static final String EXPECTED_LABEL = "Expected by chance, each limit";

  /** Label of the fact comparing the flagged counts with the chance range. */
  static final String AGAINST_CHANCE_LABEL = "Flagged against chance";

  /**
   * The observed counts beside the expected one: limits that hold flag about n (1 - confidence) rows, and a count in
   * the central {@link ControlLimits#CHANCE_LEVEL} range of Binomial(n, 1 - confidence) ({@link
   * ControlLimits#chanceRange}) is what chance alone gives. For new rows the range is binomial given the model; the
   * model's own sampling error widens it a little (see ControlLimits.chanceRange).
   */
  static String againstChance(MonitorResult m, long[] range) {
    long n = m.rowsScored();
    double share = 1 - m.confidence();
    String expected = "about " + Fmt.count(Math.round(n * share)) + " of " + Fmt.count(n) + " rows ("
        + Fmt.percent(share, 1) + ")";
    return "T2 " + Fmt.count(m.flaggedT2()) + " (" + side(m.flaggedT2(), range) + "), Q " + Fmt.count(m.flaggedQ())
        + " (" + side(m.flaggedQ(), range) + ") against " + expected + " expected with limits that hold; chance alone"
        + " gives " + Fmt.count(range[0]) + " to " + Fmt.count(range[1]) + " in "
        + Fmt.percent(ControlLimits.CHANCE_LEVEL, 0) + " of runs (binomial)"
        + (m.fittedRows() ? "" : ", a little more spread for new rows from the model's own sampling error");
  }

  private static String side(long flagged, long[] range) {
    return flagged > range[1] ? "above the chance range" : flagged < range[0] ? "below the chance range"
        : "within the chance range";
  }

  /** What a point of the charts is: a time bucket's share of flagged rows, or one row (sampled or not). */
  static String caption(MonitorResult m, String label, int points, boolean buckets, long[] rows, boolean perGroup) {
    String expected = Fmt.percent(1 - m.confidence(), 1);
    String limit = perGroup ? "its group's limit" : "the row limit";
    if (buckets) {
      long least = Long.MAX_VALUE;
      long most = 0;
      for (long r : rows) {
        least = Math.min(least, r);
        most = Math.max(most, r);
      }
      return "Each point is one time bucket of " + label + ": the share of the bucket's rows above " + limit + " ("
          + Fmt.count(points) + " buckets of " + Fmt.count(least) + (least == most ? "" : " to " + Fmt.count(most))
          + " rows). The dashed line is the share a limit that holds flags, 1 - confidence = " + expected
          + ". Triangles are buckets with more flagged rows than chance explains (above the "
          + Fmt.percent(BUCKET_CHANCE, 1) + " quantile of a binomial count at " + expected + ").";
    }
    String rowsText = points >= m.rowsScored() ? "one of the " + Fmt.count(m.rowsScored()) + " scored rows"
        : "one row of a seeded sample of " + Fmt.count(points) + " of the " + Fmt.count(m.rowsScored())
            + " scored rows (chosen by a hash of their keys" + (label.startsWith("row") ? ", drawn in that order, not"
            + " in time)" : ")");
    return "Each point is " + rowsText + (perGroup ? ", its value divided by its group's limit (the line at 1)"
        : ", with its own value against the row limit") + ": a limit that holds puts about " + expected
        + " of the points above it.";
  }

  private static TopRow topRow(MonitorResult.FlaggedRow r) {
    List<MonitorResult.Contribution> sorted = new ArrayList<>(r.qContributions());
    sorted.sort(Comparator.comparingDouble((MonitorResult.Contribution c) -> -c.value()));
    List<Fact> contributions = new ArrayList<>();
    for (int i = 0; i < Math.min(CONTRIBUTIONS, sorted.size()); i++) {
      contributions.add(new Fact(sorted.get(i).feature(), Fmt.num(sorted.get(i).value(), 3)));
    }
    String by = r.flaggedT2() && r.flaggedQ() ? "T2 and Q" : r.flaggedT2() ? "T2" : r.flaggedQ() ? "Q" : "—";
    return new TopRow(r.keys(), Fmt.num(r.t2()), Fmt.num(r.q()), by, contributions);
  }

  /** The columns of the top rows' keys as the scoring pass named them; "key i" only for a record without them. */
  private static List<String> keyNames(RunResult run, MonitorResult m) {
    int width = m.top().isEmpty() ? -1 : m.top().get(0).keys().size();
    List<String> names = m.topColumns() != null && (width < 0 || m.topColumns().size() == width) ? m.topColumns()
        : run.plan().keys();
    if (width < 0 || names.size() == width) {
      return names;
    }
    List<String> out = new ArrayList<>();
    for (int i = 0; i < width; i++) {
      out.add(i < names.size() ? names.get(i) : "key " + (i + 1));
    }
    return out;
  }

  /**
   * Whether positions are times. The series states it only through its label, so: a label that does not name the
   * row order, with every position between 1973 and 2100 in seconds since the epoch.
   */
  static boolean isTime(String label, double[] position) {
    if (position.length == 0 || label == null || label.toLowerCase(java.util.Locale.ROOT).startsWith("row")) {
      return false;
    }
    for (double p : position) {
      if (!(p >= 1e8 && p <= 4.1e9)) {
        return false;
      }
    }
    return true;
  }

  /** Points above the T2 limit (a row series): drawn highlighted, as the monitor flags them. */
  public boolean t2Over(int i) {
    return t2[i] > t2Limit;
  }

  public boolean qOver(int i) {
    return q[i] > qLimit;
  }

  /** The share of bucket i's rows above the limit of T2 ({@code t2} true) or Q; 0 for an empty bucket. */
  public double share(boolean t2, int i) {
    return rows[i] == 0 ? 0 : (t2 ? overT2[i] : overQ[i]) / (double) rows[i];
  }

  /**
   * Whether bucket i has more rows above the limit than chance explains: its count exceeds the
   * {@value #BUCKET_CHANCE} quantile of Binomial(rows, 1 - confidence) (Commons Math).
   */
  public boolean bucketExcess(boolean t2, int i) {
    long n = rows[i];
    long over = t2 ? overT2[i] : overQ[i];
    if (n == 0 || over == 0 || !(expected > 0)) {
      return false;
    }
    if (n > Integer.MAX_VALUE) {
      return over > n * expected + 3.1 * Math.sqrt(n * expected * (1 - expected));
    }
    return over > new BinomialDistribution(null, (int) n, expected).inverseCumulativeProbability(BUCKET_CHANCE);
  }
}
