package io.eigenmill.report;

import java.util.List;
import java.util.function.ToDoubleFunction;

/** The k-selection curves and the cluster sizes, drawn from {@link ClusterModel}. */
final class ClusterCharts {
  private ClusterCharts() {}

  /** One selection criterion against k, the chosen k marked by a dashed line and a larger marker. */
  static String curve(ClusterModel m, String id, String title, ToDoubleFunction<ClusterModel.Selection> value) {
    List<ClusterModel.Selection> sel = m.selection();
    Svg svg = new Svg(id, 320, 230, title + " for each k tried; chosen k = " + m.k());
    Plot p = new Plot(svg, 62, 30, 14, 44);
    double[] ks = new double[sel.size()];
    double[] vs = new double[sel.size()];
    for (int i = 0; i < sel.size(); i++) {
      ks[i] = sel.get(i).k();
      vs[i] = value.applyAsDouble(sel.get(i));
    }
    Scale x = Scale.exact(ScoreCharts.min(ks) - 0.5, ScoreCharts.max(ks) + 0.5, p.left, p.right);
    Scale y = p.yLinear(ScoreCharts.min(vs), ScoreCharts.max(vs));
    p.yGrid(y);
    double chosenX = x.map(m.k());
    svg.line(chosenX, p.top, chosenX, p.bottom, "k-line");
    double[] px = new double[ks.length];
    double[] py = new double[ks.length];
    for (int i = 0; i < ks.length; i++) {
      px[i] = x.map(ks[i]);
      py[i] = y.map(vs[i]);
    }
    svg.polyline(px, py, "sel-line");
    for (int i = 0; i < ks.length; i++) {
      boolean chosen = sel.get(i).chosen();
      svg.group(chosen ? "sel-point chosen" : "sel-point", "k = " + sel.get(i).k() + ": " + Fmt.num(vs[i]));
      svg.marker(chosen ? Palette.Shape.DIAMOND : Palette.Shape.CIRCLE, px[i], py[i], chosen ? 6 : 3.2,
          chosen ? Palette.ACCENT : Palette.KEPT, null);
      svg.end();
    }
    p.frame();
    List<Double> ticks = new java.util.ArrayList<>();
    int every = ks.length > 12 ? 2 : 1;
    for (int i = 0; i < ks.length; i += every) {
      ticks.add(ks[i]);
    }
    p.xTicks(ticks, x, v -> Fmt.count(Math.round(v)));
    svg.text(p.left, 16, title, "start", "chart-title");
    p.xTitle("k (number of clusters)");
    return svg.close();
  }

  /** Cluster sizes as horizontal bars, each in its cluster's colour, with count and share. */
  static String sizes(ClusterModel m) {
    List<ClusterModel.Size> sizes = m.sizes();
    double rowHeight = 26;
    Svg svg = new Svg("chart-cluster-sizes", 960, 26 + rowHeight * sizes.size() + 44, "Size of each cluster");
    Plot p = new Plot(svg, 110, 16, 170, 44);
    long max = 1;
    for (ClusterModel.Size s : sizes) {
      max = Math.max(max, s.size());
    }
    Scale x = Scale.linear(0, max, p.left, p.right);
    p.xGrid(x);
    for (int i = 0; i < sizes.size(); i++) {
      ClusterModel.Size s = sizes.get(i);
      double y = p.top + rowHeight * i;
      svg.group("size-bar", "cluster " + s.cluster() + ": " + s.sizeText() + " " + m.unit());
      svg.marker(Palette.shape(s.cluster()), 12, y + rowHeight / 2, 5, Palette.category(s.cluster()), "pt");
      svg.text(24, y + rowHeight * 0.66, "cluster " + s.cluster(), "start", "row-label");
      svg.rect(p.left, y + 4, x.map(s.size()) - p.left, rowHeight - 8, Palette.category(s.cluster()), "size-rect");
      svg.text(x.map(s.size()) + 6, y + rowHeight * 0.66, s.sizeText() + (s.shareText().isEmpty() ? ""
          : " (" + s.shareText() + ")"), "start", "bar-label");
      svg.end();
    }
    p.frame();
    p.xTicks(x);
    p.xTitle(m.unit());
    return svg.close();
  }
}
