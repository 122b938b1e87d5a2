package io.eigenmill.report;

import java.util.List;

/**
 * The snapshot strip: one bar per key in key order, its height the rows used, with the rows read but dropped (missing
 * values) stacked on top in a lighter colour. Labels under the bars are thinned to every n-th key when they would
 * overlap; every bar keeps its full key and counts in its title.
 */
final class SnapshotCharts {
  /** Bars wider than this are drawn at this width, centred in their slot (a strip of three keys stays a strip). */
  static final double MAX_BAR = 56;
  /** Keys up to which each bar carries its rows used as a number. */
  static final int NUMBERED = 16;
  static final double WIDTH = 960;
  static final double LEFT = 76;
  static final double RIGHT = 16;

  private SnapshotCharts() {}

  static String strip(SnapshotModel m) {
    List<SnapshotModel.Key> keys = m.keys();
    int n = keys.size();
    Svg svg = new Svg("chart-snapshots", WIDTH, 240, "Rows per snapshot, used and dropped, in key order");
    Plot p = new Plot(svg, LEFT, 34, RIGHT, 46);
    Scale y = Scale.linear(0, Math.max(1, m.maxRowsRead()), p.bottom, p.top);
    p.yGrid(y);
    double slot = slot(n);
    double bar = Math.max(1, Math.min(MAX_BAR, slot * 0.72));
    int every = labelStep(m);
    for (int i = 0; i < n; i++) {
      SnapshotModel.Key k = keys.get(i);
      double cx = p.left + slot * (i + 0.5);
      double usedTop = y.map(k.rowsUsed());
      double readTop = y.map(Math.max(k.rowsRead(), k.rowsUsed()));
      svg.group("snapshot-bar", k.display() + ": " + Fmt.count(k.rowsRead()) + " rows read, "
          + Fmt.count(k.rowsUsed()) + " used, " + Fmt.count(k.rowsDropped()) + " dropped");
      svg.rect(cx - bar / 2, usedTop, bar, p.bottom - usedTop, Palette.KEPT, "snapshot-used");
      if (k.rowsDropped() > 0) {
        svg.rect(cx - bar / 2, readTop, bar, usedTop - readTop, Palette.ACCENT, "snapshot-dropped");
      }
      if (n <= NUMBERED) {
        svg.text(cx, readTop - 5, Fmt.count(k.rowsUsed()), "middle", "bar-label");
      }
      svg.end();
      if (i % every == 0) {
        svg.line(cx, p.bottom, cx, p.bottom + 4, "axis");
        svg.text(cx, p.bottom + 16, k.label(), "middle", "tick snapshot-key");
      }
    }
    p.frame();
    svg.text(p.left, 18, (m.written() ? "Snapshots written" : "Snapshots merged") + " · " + Fmt.count(n)
        + (n == 1 ? " key" : " keys"), "start", "chart-title");
    double lx = p.right - 300;
    svg.rect(lx, 9, 11, 11, Palette.KEPT);
    svg.text(lx + 15, 19, "rows used", "start", "legend-label");
    svg.rect(lx + 95, 9, 11, 11, Palette.ACCENT);
    svg.text(lx + 110, 19, "dropped (missing values)", "start", "legend-label");
    p.xTitle(String.join(", ", m.keyColumns()));
    p.yTitle("rows");
    return svg.close();
  }

  /** The width of one key's slot along the strip. */
  static double slot(int keys) {
    return (WIDTH - LEFT - RIGHT) / Math.max(1, keys);
  }

  /** Every how many keys a label is drawn (1: every key): labels at 11 px with 10 units between them. */
  static int labelStep(SnapshotModel m) {
    double widest = 0;
    for (SnapshotModel.Key k : m.keys()) {
      widest = Math.max(widest, Svg.textWidth(k.label(), Plot.TICK_FONT));
    }
    return Math.max(1, (int) Math.ceil((widest + 10) / slot(m.keys().size())));
  }
}
