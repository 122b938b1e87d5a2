package io.eigenmill.report;

import java.util.List;

/** The scree plot and the loadings charts, drawn from {@link ScreeModel} and {@link LoadingsModel}. */
final class SpectrumCharts {
  private SpectrumCharts() {}

  /**
   * Eigenvalues as bars (kept components dark, the others light) on the left axis, linear or log; the cumulative
   * explained-variance ratio as a line on the right axis (0 to 100%); the variance target and k marked.
   */
  static String scree(ScreeModel m) {
    List<ScreeModel.Component> cs = m.components();
    Svg svg = new Svg("chart-scree", 960, 380, "Scree plot: eigenvalue and cumulative explained variance of each "
        + "component; k = " + m.k());
    Plot p = new Plot(svg, 78, 44, 64, 50);
    double max = 0;
    double minPositive = Double.POSITIVE_INFINITY;
    for (ScreeModel.Component c : cs) {
      max = Math.max(max, c.eigenvalue());
      if (c.eigenvalue() > 0) {
        minPositive = Math.min(minPositive, c.eigenvalue());
      }
    }
    boolean log = m.logScale() && max > 0;
    Scale y = log ? Scale.log(Math.max(minPositive, max * 1e-16), max, p.bottom, p.top)
        : Scale.linear(0, max > 0 ? max : 1, p.bottom, p.top);
    Scale share = Scale.exact(0, 1, p.bottom, p.top);
    p.yGrid(y);
    p.yRightTicks(share, v -> Fmt.fixed(v * 100, 0) + "%");
    double band = p.width() / cs.size();
    double[] xs = new double[cs.size()];
    double[] ys = new double[cs.size()];
    for (int i = 0; i < cs.size(); i++) {
      ScreeModel.Component c = cs.get(i);
      double x = p.left + band * i;
      double top = y.map(Math.max(c.eigenvalue(), y.lo()));
      svg.group("bar", "PC" + c.number() + ": eigenvalue " + c.eigenvalueText() + ", " + c.ratioText()
          + " of variance, " + c.cumulativeText() + " cumulative" + (c.kept() ? ", kept" : ""));
      svg.rect(x + band * 0.15, top, band * 0.7, p.bottom - top, c.kept() ? Palette.KEPT : Palette.DISCARDED);
      svg.end();
      xs[i] = x + band / 2;
      ys[i] = share.map(c.cumulative());
      int every = cs.size() <= 30 ? 1 : 5;
      if (c.number() == 1 || c.number() % every == 0) {
        svg.text(xs[i], p.bottom + 16, Integer.toString(c.number()), "middle", "tick");
      }
      if (cs.size() <= 16 && c.ratio() >= 0.001) {
        svg.text(xs[i], top - 5, c.ratioText(), "middle", "bar-label ev-label");
      }
    }
    p.frame();
    if (!Double.isNaN(m.target())) {
      double ty = share.map(m.target());
      svg.line(p.left, ty, p.right, ty, "target");
      svg.text(p.right - 4, ty + 15, "target " + Fmt.percent(m.target(), 0), "end", "note-label");
    }
    if (m.k() > 0 && m.k() <= cs.size()) {
      double kx = p.left + band * m.k();
      svg.line(kx, p.top - 8, kx, p.bottom, "k-line");
      svg.text(kx + 5, p.top - 10, "k = " + m.k(), "start", "k-label");
    }
    svg.polyline(xs, ys, "curve");
    for (int i = 0; i < xs.length; i++) {
      svg.marker(Palette.Shape.CIRCLE, xs[i], ys[i], cs.size() <= 40 ? 3 : 2, Palette.ACCENT, "curve-point");
    }
    legend(svg, p.left, 18, !Double.isNaN(m.target()));
    p.xTitle("component");
    p.yTitle("eigenvalue (variance of the component)" + (log ? ", log scale" : ""));
    p.yRightTitle("cumulative share of variance");
    return svg.close();
  }

  private static void legend(Svg svg, double x, double y, boolean target) {
    svg.rect(x, y - 9, 12, 12, Palette.KEPT);
    svg.text(x + 17, y + 1, "kept component", "start", "legend-label");
    svg.rect(x + 140, y - 9, 12, 12, Palette.DISCARDED);
    svg.text(x + 157, y + 1, "not kept", "start", "legend-label");
    svg.line(x + 240, y - 3, x + 264, y - 3, "curve");
    svg.marker(Palette.Shape.CIRCLE, x + 252, y - 3, 3, Palette.ACCENT, "curve-point");
    svg.text(x + 270, y + 1, "cumulative share", "start", "legend-label");
    if (target) {
      svg.line(x + 400, y - 3, x + 424, y - 3, "target");
      svg.text(x + 430, y + 1, "variance target", "start", "legend-label");
    }
  }

  /**
   * Features (rows) by kept components (columns), each cell coloured on the blue-orange scale centred on zero with
   * its value written in it; a line separates groups of features that load most on the same component.
   */
  static String heatmap(LoadingsModel m) {
    int rows = m.rows().size();
    int cols = m.components().size();
    double labelWidth = labelWidth(m.rows().stream().map(LoadingsModel.Row::feature).toList());
    int maxChars = labelChars(labelWidth);
    double cell = Math.max(40, Math.min(66, 560.0 / cols));
    double rowHeight = 19;
    double top = 46;
    double gridWidth = cell * cols;
    double width = labelWidth + gridWidth + 130 + 120;
    double height = top + rowHeight * rows + 24;
    Svg svg = new Svg("chart-loadings-heatmap", width, height, "Loadings of each feature on the kept components");
    for (int c = 0; c < cols; c++) {
      double cx = labelWidth + cell * (c + 0.5);
      svg.text(cx, top - 22, m.components().get(c), "middle", "col-label");
      svg.text(cx, top - 8, m.shares().get(c), "middle", "tick");
    }
    for (int i = 0; i < rows; i++) {
      LoadingsModel.Row r = m.rows().get(i);
      double y = top + rowHeight * i;
      svg.group("heat-row", r.feature());
      svg.text(labelWidth - 8, y + rowHeight * 0.68, Html.shorten(r.feature(), maxChars), "end", "row-label");
      for (int c = 0; c < cols; c++) {
        String fill = Palette.diverging(m.maxAbs() > 0 ? r.values()[c] / m.maxAbs() : 0);
        svg.rect(labelWidth + cell * c, y, cell - 1, rowHeight - 1, fill);
        String cls = Palette.textOn(fill).equals("#ffffff") ? "cell-label on-dark" : "cell-label";
        svg.text(labelWidth + cell * (c + 0.5), y + rowHeight * 0.68, r.texts().get(c), "middle", cls);
      }
      svg.end();
      boolean groupStart = i == 0 || m.rows().get(i - 1).group() != r.group();
      if (groupStart) {
        if (i > 0) {
          svg.line(labelWidth - 6, y - 0.5, labelWidth + gridWidth + 8, y - 0.5, "group-line");
        }
        svg.text(labelWidth + gridWidth + 12, y + rowHeight * 0.68, "strongest on " + m.components().get(r.group()),
            "start", "group-label");
      }
    }
    divergingLegend(svg, labelWidth + gridWidth + 150, top, Math.min(220, rowHeight * rows), m.maxAbs());
    return svg.close();
  }

  /** A vertical colour bar from +max (top) to -max (bottom) with three labelled ticks. */
  static void divergingLegend(Svg svg, double x, double y, double h, double maxAbs) {
    int steps = 24;
    double step = h / steps;
    for (int i = 0; i < steps; i++) {
      double t = 1 - (i + 0.5) / steps * 2;
      svg.rect(x, y + step * i, 16, step + 0.6, Palette.diverging(t));
    }
    svg.text(x, y - 8, "loading", "start", "legend-label");
    svg.text(x + 22, y + 8, "+" + Fmt.fixed(maxAbs, 2), "start", "tick");
    svg.text(x + 22, y + h / 2 + 4, "0", "start", "tick");
    svg.text(x + 22, y + h, "-" + Fmt.fixed(maxAbs, 2), "start", "tick");
  }

  /**
   * The largest loadings of one component as horizontal bars around zero, feature names on the left in a column
   * {@code labelWidth} wide ({@link #labelWidth} of the names of every chart drawn beside it).
   */
  static String topBars(LoadingsModel.TopList t, double scaleMax, double labelWidth, int index) {
    int n = t.bars().size();
    double rowHeight = 24;
    int maxChars = labelChars(labelWidth);
    Svg svg = new Svg("chart-loadings-top-" + (index + 1), labelWidth + 210, 40 + rowHeight * n + 30,
        "Largest loadings of " + t.component());
    Plot p = new Plot(svg, labelWidth + 8, 32, 58, 30);
    Scale x = Scale.exact(-scaleMax, scaleMax, p.left, p.right);
    svg.text(0, 16, t.component() + (t.share().isEmpty() ? "" : " · " + t.share() + " of variance"), "start",
        "chart-title");
    double zero = x.map(0);
    for (int i = 0; i < n; i++) {
      LoadingsModel.Bar b = t.bars().get(i);
      double y = p.top + rowHeight * i;
      double end = x.map(b.value());
      svg.group("top-bar", b.feature() + ": " + b.text());
      svg.text(labelWidth, y + rowHeight * 0.62, Html.shorten(b.feature(), maxChars), "end", "row-label");
      svg.rect(Math.min(zero, end), y + 4, Math.abs(end - zero), rowHeight - 8,
          Palette.diverging(b.value() >= 0 ? 0.8 : -0.8));
      svg.text(svg.width() - 4, y + rowHeight * 0.62, b.text(), "end", "bar-label");
      svg.end();
    }
    svg.line(zero, p.top - 4, zero, p.bottom, "axis");
    p.xTicks(List.of(-scaleMax, 0.0, scaleMax), x, v -> Fmt.fixed(v, 2));
    return svg.close();
  }

  private static final double ROW_LABEL_FONT = 12;

  /**
   * Room for feature names right-aligned at the returned x: the widest name at the row-label font, between 80 and
   * 230 units, plus a 12-unit margin on the left so that no name is cut at the edge of the drawing.
   */
  static double labelWidth(List<String> names) {
    double widest = 0;
    for (String name : names) {
      widest = Math.max(widest, Svg.textWidth(name, ROW_LABEL_FONT));
    }
    return Math.min(230, Math.max(80, widest)) + 12;
  }

  /** How many characters of a name fit in {@link #labelWidth}: longer names end in an ellipsis (Html.shorten). */
  static int labelChars(double labelWidth) {
    return (int) ((labelWidth - 12) / (ROW_LABEL_FONT * Svg.CHAR_EM));
  }
}
