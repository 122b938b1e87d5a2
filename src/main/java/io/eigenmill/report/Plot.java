package io.eigenmill.report;

import java.util.List;
import java.util.function.DoubleFunction;

/**
 * A plotting area inside an {@link Svg}: the rectangle the data occupy, and its grid, ticks and axis titles.
 * All positions are computed here, in Java, so that a chart has the same geometry on every machine.
 */
final class Plot {
  static final double TICK_FONT = 11;

  final Svg svg;
  final double left;
  final double top;
  final double right;
  final double bottom;

  /** The data area: {@code margins} = left, top, right, bottom, in user units. */
  Plot(Svg svg, double marginLeft, double marginTop, double marginRight, double marginBottom) {
    this.svg = svg;
    this.left = marginLeft;
    this.top = marginTop;
    this.right = svg.width() - marginRight;
    this.bottom = svg.height() - marginBottom;
  }

  double width() {
    return right - left;
  }

  double height() {
    return bottom - top;
  }

  Scale xLinear(double min, double max) {
    return Scale.linear(min, max, left, right);
  }

  Scale yLinear(double min, double max) {
    return Scale.linear(min, max, bottom, top);
  }

  /** Horizontal grid lines with labels left of the area. */
  void yGrid(Scale y) {
    yGrid(y, y::label);
  }

  void yGrid(Scale y, DoubleFunction<String> label) {
    List<Double> ticks = y.ticks();
    for (double t : ticks) {
      double py = y.map(t);
      svg.line(left, py, right, py, "grid");
      svg.text(left - 6, py + 4, label.apply(t), "end", "tick");
    }
  }

  /** Labels right of the area, for a second vertical scale (no grid lines). */
  void yRightTicks(Scale y, DoubleFunction<String> label) {
    for (double t : y.ticks()) {
      double py = y.map(t);
      svg.line(right, py, right + 4, py, "axis");
      svg.text(right + 7, py + 4, label.apply(t), "start", "tick");
    }
  }

  /** Tick marks and labels under the area. */
  void xTicks(Scale x) {
    xTicks(x.ticks(), x, x::label);
  }

  void xTicks(List<Double> ticks, Scale x, DoubleFunction<String> label) {
    for (double t : ticks) {
      double px = x.map(t);
      if (px < left - 0.5 || px > right + 0.5) {
        continue;
      }
      svg.line(px, bottom, px, bottom + 4, "axis");
      svg.text(px, bottom + 16, label.apply(t), "middle", "tick");
    }
  }

  /** Vertical grid lines (for scatter plots). */
  void xGrid(Scale x) {
    for (double t : x.ticks()) {
      double px = x.map(t);
      svg.line(px, top, px, bottom, "grid");
    }
  }

  /** The left and bottom axis lines. */
  void frame() {
    svg.line(left, bottom, right, bottom, "axis");
    svg.line(left, top, left, bottom, "axis");
  }

  void xTitle(String title) {
    svg.text((left + right) / 2, svg.height() - 8, title, "middle", "axis-title");
  }

  void yTitle(String title) {
    svg.verticalText(14, (top + bottom) / 2, title, "axis-title");
  }

  void yRightTitle(String title) {
    svg.verticalText(svg.width() - 10, (top + bottom) / 2, title, "axis-title");
  }
}
