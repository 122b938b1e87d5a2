package io.eigenmill.report;

import io.eigenmill.jobs.MonitorResult;
import io.eigenmill.jobs.RunResult;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * Monitoring: T2 and Q along row order or time with their control limits, the counts the monitor flagged, the
 * limit rules, and the top flagged rows with the features that drive their Q.
 *
 * @param counts rows scored and flagged, as the monitor counted them
 * @param limits the two limits with their rules
 * @param time true when positions are seconds since the epoch (see {@link #isTime})
 * @param keyNames names of the key columns, for the table header
 */
public record MonitoringModel(
    List<Fact> counts,
    List<Fact> limits,
    String positionLabel,
    boolean time,
    double[] position,
    double[] t2,
    double[] q,
    double t2Limit,
    double qLimit,
    String confidence,
    List<String> keyNames,
    List<TopRow> top) {

  /** Contributions listed per flagged row. */
  static final int CONTRIBUTIONS = 5;

  /** @param contributions the largest Q contributions, largest first */
  public record TopRow(List<String> keys, String t2, String q, String flaggedBy, List<Fact> contributions) {}

  static MonitoringModel of(RunResult run) {
    MonitorResult m = run.monitor();
    if (m == null) {
      return null;
    }
    List<Fact> counts = List.of(
        new Fact("Rows scored", Fmt.count(m.rowsScored())),
        new Fact("Flagged by T2", Fmt.count(m.flaggedT2())),
        new Fact("Flagged by Q", Fmt.count(m.flaggedQ())),
        new Fact("Flagged by both", Fmt.count(m.flaggedBoth())),
        new Fact("Confidence of the limits", Fmt.percent(m.confidence(), 1)),
        new Fact("Components (k)", Fmt.count(m.k())));
    List<Fact> limits = List.of(
        new Fact("T2 limit", Fmt.num(m.t2Limit()) + " — " + m.t2LimitRule()),
        new Fact("Q limit", Fmt.num(m.qLimit()) + " — " + m.qLimitRule()));
    MonitorResult.Series s = m.series();
    double[] empty = new double[0];
    double[] pos = s == null ? empty : s.position();
    String label = s == null ? "row" : s.positionLabel();
    List<TopRow> top = new ArrayList<>();
    for (MonitorResult.FlaggedRow r : m.top()) {
      top.add(topRow(r));
    }
    return new MonitoringModel(counts, limits, label, isTime(label, pos), pos, s == null ? empty : s.t2(),
        s == null ? empty : s.q(), m.t2Limit(), m.qLimit(), Fmt.percent(m.confidence(), 1),
        keyNames(run, m), top);
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

  private static List<String> keyNames(RunResult run, MonitorResult m) {
    List<String> names = run.plan().keys();
    int width = m.top().isEmpty() ? names.size() : m.top().get(0).keys().size();
    if (names.size() == width) {
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

  /** Points above the T2 limit: drawn highlighted, as the monitor flags them. */
  public boolean t2Over(int i) {
    return t2[i] > t2Limit;
  }

  public boolean qOver(int i) {
    return q[i] > qLimit;
  }
}
