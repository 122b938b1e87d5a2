package io.eigenmill.report;

import java.util.List;

/**
 * The presence chart of the long-input section: one horizontal bar per metric, the share of the pivoted rows where
 * it has a value, least present first, with a dashed rule at {@code input.long.min-presence} (a fit) and the bars of
 * the metrics left out of the fit in the accent colour, labelled "dropped".
 */
final class LongInputCharts {
  static final double WIDTH = 960;

  private LongInputCharts() {}

  static String presence(LongInputModel m) {
    List<LongInputModel.Bar> bars = m.bars();
    double labelWidth = SpectrumCharts.labelWidth(bars.stream().map(LongInputModel.Bar::metric).toList());
    int maxChars = SpectrumCharts.labelChars(labelWidth);
    double rowHeight = bars.size() > 20 ? 16 : 22;
    Svg svg = new Svg("chart-long-presence", WIDTH, 48 + rowHeight * bars.size() + 36, "Share of the pivoted rows"
        + " where each metric has a value, least present first");
    Plot p = new Plot(svg, labelWidth + 8, 40, 130, 36);
    Scale x = Scale.exact(0, 1, p.left, p.right);
    p.xGrid(x);
    for (int i = 0; i < bars.size(); i++) {
      LongInputModel.Bar b = bars.get(i);
      double y = p.top + rowHeight * i;
      String share = Fmt.percent(b.presence(), 1);
      svg.group(b.dropped() ? "presence-bar dropped" : "presence-bar", b.metric() + (b.metric().equals(b.column())
          ? "" : " (column " + b.column() + ")") + ": a value in " + Fmt.count(b.present()) + " rows, " + share
          + (b.dropped() ? "; dropped" : ""));
      svg.text(labelWidth, y + rowHeight * 0.68, Html.shorten(b.metric(), maxChars), "end", "row-label");
      double w = x.map(Math.max(0, Math.min(1, b.presence()))) - p.left;
      svg.rect(p.left, y + 3, w, rowHeight - 6, b.dropped() ? Palette.ACCENT : Palette.KEPT);
      svg.text(p.left + w + 4, y + rowHeight * 0.68, share + (b.dropped() ? " · dropped" : ""), "start",
          b.dropped() ? "bar-label dropped-label" : "bar-label");
      svg.end();
    }
    svg.line(p.left, p.top - 4, p.left, p.bottom, "axis");
    if (m.dropsSparse()) {
      double rx = x.map(Math.max(0, Math.min(1, m.minPresence())));
      svg.line(rx, p.top - 6, rx, p.bottom, "target");
      svg.text(rx, p.top - 10, "min-presence " + Fmt.percent(m.minPresence(), 0), "middle", "k-label");
    }
    p.xTicks(x.ticks(), x, v -> Fmt.fixed(v * 100, 0) + "%");
    svg.text(p.left, 16, "Rows with a value, per metric · " + Fmt.count(m.metricsTotal())
        + (m.metricsTotal() == 1 ? " metric" : " metrics") + (bars.size() < m.metricsTotal() ? ", the "
            + bars.size() + " least present shown" : ""), "start", "chart-title");
    if (m.dropped() > 0) {
      double lx = p.right - 130;
      svg.rect(lx, 7, 11, 11, Palette.KEPT);
      svg.text(lx + 15, 17, "used", "start", "legend-label");
      svg.rect(lx + 60, 7, 11, 11, Palette.ACCENT);
      svg.text(lx + 75, 17, "dropped", "start", "legend-label");
    }
    p.xTitle("share of the pivoted rows where the metric has a value");
    return svg.close();
  }
}
