package io.eigenmill.report;

/** The score map: one scatter plot per {@link ScoreMapModel.Plot}, markers coloured and shaped by cluster. */
final class ScoreCharts {
  /** Colour of points that have no cluster (no clustering ran, or the row was not assigned). */
  static final String PLAIN = Palette.KEPT;
  static final String UNASSIGNED = "#9aa3ad";

  private ScoreCharts() {}

  static String scatter(ScoreMapModel m, ScoreMapModel.Plot plot) {
    Svg svg = new Svg(plot.id(), 470, 420, "Scores: " + plot.yLabel() + " against " + plot.xLabel());
    Plot p = new Plot(svg, 64, 16, 16, 52);
    double[][] pts = m.points();
    double[] xs = new double[pts.length];
    double[] ys = new double[pts.length];
    for (int i = 0; i < pts.length; i++) {
      xs[i] = pts[i][plot.x()];
      ys[i] = plot.y() < 0 ? i : pts[i][plot.y()];
    }
    Scale x = p.xLinear(min(xs), max(xs));
    Scale y = p.yLinear(min(ys), max(ys));
    p.xGrid(x);
    p.yGrid(y);
    zeroLines(p, x, y, plot.y() >= 0);
    svg.group("points", null);
    for (int i = 0; i < pts.length; i++) {
      int c = m.clusters() == null ? -1 : m.clusters()[i];
      String fill = m.clusters() == null ? PLAIN : c < 0 ? UNASSIGNED : Palette.category(c);
      Palette.Shape shape = c < 0 ? Palette.Shape.CIRCLE : Palette.shape(c);
      svg.marker(shape, x.map(xs[i]), y.map(ys[i]), 3, fill, "pt");
    }
    svg.end();
    p.frame();
    p.xTicks(x);
    p.xTitle(plot.xLabel());
    p.yTitle(plot.yLabel());
    return svg.close();
  }

  /** Dashed lines through score zero (the mean of the fitted rows), when zero is inside the domain. */
  private static void zeroLines(Plot p, Scale x, Scale y, boolean horizontal) {
    if (x.lo() < 0 && x.hi() > 0) {
      p.svg.line(x.map(0), p.top, x.map(0), p.bottom, "zero-line");
    }
    if (horizontal && y.lo() < 0 && y.hi() > 0) {
      p.svg.line(p.left, y.map(0), p.right, y.map(0), "zero-line");
    }
  }

  /** A small marker for the HTML legend of the clusters. */
  static String swatch(int cluster) {
    Svg svg = Svg.icon(14);
    svg.marker(Palette.shape(cluster), 7, 7, 5, Palette.category(cluster), "pt");
    return svg.close();
  }

  static double min(double[] v) {
    double m = Double.POSITIVE_INFINITY;
    for (double x : v) {
      if (Double.isFinite(x)) {
        m = Math.min(m, x);
      }
    }
    return Double.isInfinite(m) ? 0 : m;
  }

  static double max(double[] v) {
    double m = Double.NEGATIVE_INFINITY;
    for (double x : v) {
      if (Double.isFinite(x)) {
        m = Math.max(m, x);
      }
    }
    return Double.isInfinite(m) ? 0 : m;
  }
}
