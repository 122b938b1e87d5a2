package io.eigenmill.report;

import java.util.List;

/**
 * The charts of the groups section: a small scree curve per group (the same axes in every one, the pooled model's
 * curve drawn faintly behind) and the largest principal angle of each group to the pooled model as sorted bars.
 */
final class GroupCharts {
  static final double SMALL_WIDTH = 236;
  static final double SMALL_HEIGHT = 150;
  static final String POOLED = "#9aa3ad";

  private GroupCharts() {}

  /** The largest share drawn in any small multiple (pooled included): one y axis for all of them. */
  static double maxShare(GroupsModel m) {
    double max = 0;
    for (double s : m.pooledShares()) {
      max = Math.max(max, s);
    }
    for (GroupsModel.Scree s : m.screes()) {
      for (double v : s.shares()) {
        max = Math.max(max, v);
      }
    }
    return max > 0 ? Math.min(1, max) : 1;
  }

  /** One group's variance share per component: kept bars dark, the rest light, k marked, the pooled curve faint. */
  static String scree(GroupsModel m, GroupsModel.Scree s, int index, double maxShare) {
    int n = Math.max(s.shares().length, m.pooledShares().length);
    Svg svg = new Svg("chart-group-scree-" + (index + 1), SMALL_WIDTH, SMALL_HEIGHT, "Variance share per component"
        + " of " + s.display() + ", k = " + s.k() + ", with the pooled model's for comparison");
    Plot p = new Plot(svg, 36, 30, 8, 22);
    Scale y = Scale.linear(0, maxShare, p.bottom, p.top);
    for (double t : y.ticks()) {
      double py = y.map(t);
      svg.line(p.left, py, p.right, py, "grid");
      svg.text(p.left - 4, py + 4, Fmt.fixed(t * 100, 0) + "%", "end", "tick");
    }
    double band = p.width() / Math.max(1, n);
    svg.group("group-scree-bars", null);
    for (int i = 0; i < s.shares().length; i++) {
      double top = y.map(s.shares()[i]);
      svg.group("scree-bar", "PC" + (i + 1) + ": " + Fmt.percent(s.shares()[i], 1) + " of the group's variance"
          + (i < s.k() ? ", kept" : ""));
      svg.rect(p.left + band * i + band * 0.12, top, band * 0.76, p.bottom - top,
          i < s.k() ? Palette.KEPT : Palette.DISCARDED);
      svg.end();
    }
    svg.end();
    if (m.pooledShares().length > 0) {
      int c = Math.min(n, m.pooledShares().length);
      double[] xs = new double[c];
      double[] ys = new double[c];
      for (int i = 0; i < c; i++) {
        xs[i] = p.left + band * (i + 0.5);
        ys[i] = y.map(m.pooledShares()[i]);
      }
      svg.polyline(xs, ys, "pooled-curve");
    }
    if (s.k() > 0 && s.k() <= n) {
      double kx = p.left + band * s.k();
      svg.line(kx, p.top - 2, kx, p.bottom, "k-line");
      svg.text(kx + 3, p.top + 8, "k = " + s.k(), "start", "k-label small");
    }
    p.frame();
    svg.text(p.left + band * 0.5, p.bottom + 13, "1", "middle", "tick");
    svg.text(p.left + band * (n - 0.5), p.bottom + 13, Integer.toString(n), "middle", "tick");
    svg.text((p.left + p.right) / 2, p.bottom + 13, "component", "middle", "tick");
    svg.text(2, 13, Html.shorten(s.label(), 24), "start", "chart-title");
    svg.text(SMALL_WIDTH - 2, 13, Fmt.count(s.rows()) + " rows", "end", "tick");
    return svg.close();
  }

  /** The largest principal angle of each group to the pooled subspace, largest first, one labelled bar each. */
  static String angles(GroupsModel m) {
    List<GroupsModel.Angle> as = m.angles();
    double labelWidth = SpectrumCharts.labelWidth(as.stream().map(GroupsModel.Angle::label).toList());
    int maxChars = SpectrumCharts.labelChars(labelWidth);
    double rowHeight = as.size() > 20 ? 16 : 22;
    Svg svg = new Svg("chart-group-angles", 760, 44 + rowHeight * as.size() + 34, "Largest principal angle between"
        + " each group's subspace and the pooled model's, largest first");
    Plot p = new Plot(svg, labelWidth + 8, 36, 64, 34);
    double max = 0;
    for (GroupsModel.Angle a : as) {
      if (!Double.isNaN(a.degrees())) {
        max = Math.max(max, a.degrees());
      }
    }
    Scale x = max > 45 ? Scale.exact(0, 90, p.left, p.right) : Scale.linear(0, Math.max(1, max), p.left, p.right);
    p.xGrid(x);
    for (int i = 0; i < as.size(); i++) {
      GroupsModel.Angle a = as.get(i);
      double y = p.top + rowHeight * i;
      svg.group("angle-bar", a.display() + ": " + a.text());
      svg.text(labelWidth, y + rowHeight * 0.68, Html.shorten(a.label(), maxChars), "end", "row-label");
      double w = Double.isNaN(a.degrees()) ? 0 : x.map(a.degrees()) - p.left;
      svg.rect(p.left, y + 3, w, rowHeight - 6, Palette.KEPT);
      svg.text(p.left + w + 4, y + rowHeight * 0.68, a.text(), "start", "bar-label");
      svg.end();
    }
    p.xTicks(x.ticks(), x, v -> Fmt.fixed(v, 0) + "°");
    svg.line(p.left, p.top - 4, p.left, p.bottom, "axis");
    svg.text(p.left, 18, "Largest principal angle to the pooled model · " + Fmt.count(m.anglesTotal())
        + (m.anglesTotal() == 1 ? " group" : " groups") + (as.size() < m.anglesTotal() ? ", the " + as.size()
            + " largest shown" : ""), "start", "chart-title");
    p.xTitle("degrees (0: the same subspace; 90: a direction the pooled model does not have at all)");
    return svg.close();
  }
}
