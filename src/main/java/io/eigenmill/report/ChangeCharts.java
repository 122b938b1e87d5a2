package io.eigenmill.report;

import java.util.List;

/** Compression (variance kept per feature) and drift (angles, explained variance, mean shifts) charts. */
final class ChangeCharts {
  private ChangeCharts() {}

  /** Share of each feature's variance that k components keep, as bars on 0 to 100%, least kept first. */
  static String varianceKept(CompressionModel m) {
    List<CompressionModel.Feature> fs = m.features();
    double rowHeight = 20;
    double labelWidth = labelWidth(fs.stream().map(CompressionModel.Feature::name).toList());
    Svg svg = new Svg("chart-compression", 960, 20 + rowHeight * fs.size() + 40,
        "Share of each feature's variance kept by " + m.k() + " components");
    Plot p = new Plot(svg, labelWidth + 10, 12, 70, 40);
    Scale x = Scale.exact(0, 1, p.left, p.right);
    for (double t : x.ticks()) {
      svg.line(x.map(t), p.top, x.map(t), p.bottom, "grid");
    }
    for (int i = 0; i < fs.size(); i++) {
      CompressionModel.Feature f = fs.get(i);
      double y = p.top + rowHeight * i;
      svg.group("kept-bar", f.name() + ": " + f.varianceKeptText() + " of variance kept, RMSE " + f.rmse());
      svg.text(labelWidth, y + rowHeight * 0.68, Html.shorten(f.name(), (int) (labelWidth / 7)), "end", "row-label");
      svg.rect(p.left, y + 3, p.width(), rowHeight - 6, Palette.GRID);
      svg.rect(p.left, y + 3, x.map(Math.max(0, Math.min(1, f.varianceKept()))) - p.left, rowHeight - 6,
          Palette.KEPT);
      svg.text(p.right + 6, y + rowHeight * 0.68, f.varianceKeptText(), "start", "bar-label");
      svg.end();
    }
    p.frame();
    p.xTicks(x.ticks(), x, v -> Fmt.fixed(v * 100, 0) + "%");
    p.xTitle("share of the feature's variance kept");
    return svg.close();
  }

  /** Principal angles between the old and new retained subspaces, 0 to 90 degrees. */
  static String angles(DriftModel m) {
    int n = m.angles().length;
    Svg svg = new Svg("chart-drift-angles", 470, 280, "Principal angles between the two models' subspaces");
    Plot p = new Plot(svg, 56, 30, 14, 46);
    Scale y = Scale.exact(0, 90, p.bottom, p.top);
    p.yGrid(y, v -> Fmt.fixed(v, 0) + "°");
    double band = p.width() / Math.max(1, n);
    for (int i = 0; i < n; i++) {
      double top = y.map(Math.max(0, Math.min(90, m.angles()[i])));
      double cx = p.left + band * (i + 0.5);
      svg.group("angle-bar", "angle " + (i + 1) + ": " + m.angleTexts().get(i));
      svg.rect(p.left + band * (i + 0.2), top, band * 0.6, p.bottom - top, Palette.KEPT);
      if (n <= 12) {
        svg.text(cx, top - 5, m.angleTexts().get(i), "middle", "bar-label");
      }
      svg.end();
      svg.text(cx, p.bottom + 16, Integer.toString(i + 1), "middle", "tick");
    }
    p.frame();
    svg.text(p.left, 16, "Principal angles (0° = same direction)", "start", "chart-title");
    p.xTitle("angle");
    p.yTitle("degrees");
    return svg.close();
  }

  /** Explained-variance ratio per component, old model and new model side by side. */
  static String explained(DriftModel m) {
    int n = Math.max(m.varianceShareOld().length, m.varianceShareNew().length);
    Svg svg = new Svg("chart-drift-explained", 470, 280, "Explained variance per component, old and new model");
    Plot p = new Plot(svg, 56, 30, 14, 46);
    double max = Math.max(ScoreCharts.max(m.varianceShareOld()), ScoreCharts.max(m.varianceShareNew()));
    Scale y = Scale.linear(0, max > 0 ? max : 1, p.bottom, p.top);
    p.yGrid(y, v -> Fmt.fixed(v * 100, 0) + "%");
    double band = p.width() / Math.max(1, n);
    for (int i = 0; i < n; i++) {
      bar(svg, p, y, m.varianceShareOld(), m.varianceShareOldTexts(), i, p.left + band * (i + 0.12), band * 0.36,
          Palette.CATEGORICAL.get(1), "old");
      bar(svg, p, y, m.varianceShareNew(), m.varianceShareNewTexts(), i, p.left + band * (i + 0.52), band * 0.36,
          Palette.CATEGORICAL.get(0), "new");
      svg.text(p.left + band * (i + 0.5), p.bottom + 16, "PC" + (i + 1), "middle", "tick");
    }
    p.frame();
    svg.rect(p.right - 150, 8, 11, 11, Palette.CATEGORICAL.get(1));
    svg.text(p.right - 134, 18, "old model", "start", "legend-label");
    svg.rect(p.right - 66, 8, 11, 11, Palette.CATEGORICAL.get(0));
    svg.text(p.right - 50, 18, "new", "start", "legend-label");
    svg.text(p.left, 18, "Explained variance", "start", "chart-title");
    p.xTitle("component");
    return svg.close();
  }

  private static void bar(Svg svg, Plot p, Scale y, double[] values, List<String> texts, int i, double x, double w,
      String fill, String which) {
    if (i >= values.length) {
      return;
    }
    double top = y.map(Math.max(0, values[i]));
    svg.group("explained-bar " + which, "PC" + (i + 1) + ", " + which + " model: " + texts.get(i));
    svg.rect(x, top, w, p.bottom - top, fill);
    svg.end();
  }

  /** Mean shifts in old standard deviations, as bars around zero (blue down, orange up), largest first. */
  static String shifts(DriftModel m) {
    List<DriftModel.Shift> s = m.shifts();
    double rowHeight = 22;
    double labelWidth = labelWidth(s.stream().map(DriftModel.Shift::feature).toList());
    Svg svg = new Svg("chart-drift-shifts", 960, 20 + rowHeight * s.size() + 40,
        "Largest mean shifts, in standard deviations of the old model");
    Plot p = new Plot(svg, labelWidth + 10, 12, 80, 40);
    double max = 0;
    for (DriftModel.Shift d : s) {
      max = Math.max(max, Math.abs(d.shift()));
    }
    Scale x = Scale.linear(-Math.max(max, 1e-9), Math.max(max, 1e-9), p.left, p.right);
    p.xGrid(x);
    double zero = x.map(0);
    for (int i = 0; i < s.size(); i++) {
      DriftModel.Shift d = s.get(i);
      double y = p.top + rowHeight * i;
      double end = x.map(d.shift());
      svg.group("shift-bar", d.feature() + ": mean " + d.oldMean() + " → " + d.newMean() + " (" + d.shiftText()
          + " sd)");
      svg.text(labelWidth, y + rowHeight * 0.68, Html.shorten(d.feature(), (int) (labelWidth / 7)), "end",
          "row-label");
      svg.rect(Math.min(zero, end), y + 4, Math.abs(end - zero), rowHeight - 8,
          Palette.diverging(d.shift() >= 0 ? 0.8 : -0.8));
      svg.text(p.right + 6, y + rowHeight * 0.68, d.shiftText() + " sd", "start", "bar-label");
      svg.end();
    }
    svg.line(zero, p.top, zero, p.bottom, "axis");
    p.xTicks(x);
    p.xTitle("shift of the mean, in standard deviations of the old model");
    return svg.close();
  }

  /** Room for feature names at 12 px: their estimated width, between 80 and 240 units. */
  static double labelWidth(List<String> names) {
    double w = 0;
    for (String n : names) {
      w = Math.max(w, Svg.textWidth(n, 12));
    }
    return Math.min(240, Math.max(80, w)) + 8;
  }
}
