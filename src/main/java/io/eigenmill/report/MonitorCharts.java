package io.eigenmill.report;

import java.util.ArrayList;
import java.util.List;

/**
 * T2 and Q along time, per bucket: the share of the bucket's rows above the limit against the expected
 * 1 - confidence (a dashed line), buckets above chance highlighted; or, for a row series, each row's value with the
 * control limit as a dashed line and points above it highlighted.
 */
final class MonitorCharts {
  /** Time steps for axis ticks, in seconds: minutes to years, each a round span of UTC time. */
  private static final long[] TIME_STEPS = {60, 300, 900, 1800, 3600, 3 * 3600, 6 * 3600, 12 * 3600, 86400,
      2 * 86400, 7 * 86400, 14 * 86400, 30 * 86400, 91 * 86400, 365 * 86400};

  /**
   * A log axis is used when the largest value exceeds the limit this many times: on a linear axis the limit and
   * every ordinary row would be squeezed into the bottom strip. Values below 1/100 of the limit sit on the floor.
   */
  static final double LOG_FACTOR = 5;

  private MonitorCharts() {}

  /** {@code which} is "t2" or "q". */
  static String series(MonitoringModel m, String which) {
    if (m.buckets()) {
      return shares(m, which);
    }
    boolean t2 = which.equals("t2");
    double[] values = t2 ? m.t2() : m.q();
    double limit = t2 ? m.t2Limit() : m.qLimit();
    String name = t2 ? "Hotelling T2" : "Q (squared prediction error)";
    Svg svg = new Svg("chart-monitor-" + which, 960, 270, name + " along " + m.positionLabel()
        + " with its control limit");
    Plot p = new Plot(svg, 76, 26, 24, 46);
    double[] pos = m.position();
    Scale x = p.xLinear(ScoreCharts.min(pos), ScoreCharts.max(pos));
    if (m.time()) {
      x = Scale.exact(ScoreCharts.min(pos), Math.max(ScoreCharts.max(pos), ScoreCharts.min(pos) + 1), p.left,
          p.right);
    }
    double top = Math.max(ScoreCharts.max(values), limit);
    boolean log = limit > 0 && top > LOG_FACTOR * limit;
    Scale y = log ? Scale.log(Math.max(minPositive(values), limit / 100), top, p.bottom, p.top)
        : Scale.linear(0, top > 0 ? top * 1.04 : 1, p.bottom, p.top);
    p.yGrid(y);
    svg.group("points", null);
    List<Integer> over = new ArrayList<>();
    for (int i = 0; i < values.length; i++) {
      if (t2 ? m.t2Over(i) : m.qOver(i)) {
        over.add(i);
      } else {
        svg.marker(Palette.Shape.CIRCLE, x.map(pos[i]), y.map(values[i]), 1.8, Palette.KEPT, "pt-series");
      }
    }
    svg.end();
    svg.group("points flagged", null);
    for (int i : over) {
      svg.marker(Palette.Shape.TRIANGLE, x.map(pos[i]), y.map(values[i]), 3.6, Palette.ACCENT, "pt-flagged");
    }
    svg.end();
    double ly = y.map(limit);
    svg.line(p.left, ly, p.right, ly, "limit");
    svg.text(p.right - 4, ly - 6, (m.perGroup() ? "each row's group limit" : "limit " + Fmt.num(limit)) + " ("
        + m.confidence() + ")", "end", "limit-label");
    p.frame();
    if (m.time()) {
      timeTicks(p, x);
    } else {
      p.xTicks(x);
    }
    svg.text(p.left, 16, name + (log ? " (log scale)" : "") + " · " + Fmt.count(over.size()) + " of "
        + Fmt.count(values.length) + " plotted points above the limit", "start", "chart-title");
    p.xTitle(m.time() ? m.positionLabel() + " (UTC)" : m.positionLabel());
    p.yTitle(m.perGroup() ? (t2 ? "T2 / group limit" : "Q / group limit") : t2 ? "T2" : "Q");
    return svg.close();
  }

  /** Per time bucket, the share of rows above the limit, with the expected share as a dashed line. */
  private static String shares(MonitoringModel m, String which) {
    boolean t2 = which.equals("t2");
    String name = t2 ? "Hotelling T2" : "Q (squared prediction error)";
    double limit = t2 ? m.t2Limit() : m.qLimit();
    Svg svg = new Svg("chart-monitor-" + which, 960, 270, "Share of rows above the " + name + " limit per bucket of "
        + m.positionLabel() + ", against the expected share");
    Plot p = new Plot(svg, 76, 26, 24, 46);
    double[] pos = m.position();
    double lo = ScoreCharts.min(pos);
    double hi = Math.max(ScoreCharts.max(pos), lo + 1);
    Scale x = m.time() ? Scale.exact(lo, hi, p.left, p.right) : p.xLinear(lo, hi);
    double top = 2 * m.expected();
    for (int i = 0; i < pos.length; i++) {
      top = Math.max(top, m.share(t2, i));
    }
    Scale y = Scale.linear(0, Math.min(1, top * 1.08), p.bottom, p.top);
    p.yGrid(y, v -> Fmt.percent(v, v < 0.1 && v > 0 ? 1 : 0));
    svg.group("buckets", null);
    List<Integer> over = new ArrayList<>();
    for (int i = 0; i < pos.length; i++) {
      if (m.bucketExcess(t2, i)) {
        over.add(i);
      } else {
        svg.marker(Palette.Shape.CIRCLE, x.map(pos[i]), y.map(m.share(t2, i)), 1.8, Palette.KEPT, "pt-series");
      }
    }
    svg.end();
    svg.group("buckets above chance", null);
    for (int i : over) {
      svg.marker(Palette.Shape.TRIANGLE, x.map(pos[i]), y.map(m.share(t2, i)), 3.6, Palette.ACCENT, "pt-flagged");
    }
    svg.end();
    double ly = y.map(m.expected());
    svg.line(p.left, ly, p.right, ly, "limit");
    svg.text(p.right - 4, ly - 6, "expected " + Fmt.percent(m.expected(), 1) + " (1 - confidence)", "end",
        "limit-label");
    p.frame();
    if (m.time()) {
      timeTicks(p, x);
    } else {
      p.xTicks(x);
    }
    svg.text(p.left, 16, "Share of rows above the " + name + " limit (" + (m.perGroup() ? "each row's group limit"
        : Fmt.num(limit)) + ") · "
        + Fmt.count(over.size()) + " of " + Fmt.count(pos.length) + " buckets above chance", "start", "chart-title");
    p.xTitle(m.time() ? m.positionLabel() + " (UTC)" : m.positionLabel());
    p.yTitle(t2 ? "share above T2 limit" : "share above Q limit");
    return svg.close();
  }

  private static double minPositive(double[] values) {
    double m = Double.POSITIVE_INFINITY;
    for (double v : values) {
      if (v > 0) {
        m = Math.min(m, v);
      }
    }
    return Double.isInfinite(m) ? 1e-12 : m;
  }

  /** Ticks at multiples of a round time step (UTC), about six of them. */
  private static void timeTicks(Plot p, Scale x) {
    double span = x.hi() - x.lo();
    long step = TIME_STEPS[TIME_STEPS.length - 1];
    for (long s : TIME_STEPS) {
      if (span / s <= 7) {
        step = s;
        break;
      }
    }
    List<Double> ticks = new ArrayList<>();
    for (double t = Math.ceil(x.lo() / step) * step; t <= x.hi(); t += step) {
      ticks.add(t);
    }
    boolean days = step >= 86400;
    p.xTicks(ticks, x, v -> Fmt.time(v, days));
  }
}
