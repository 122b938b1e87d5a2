package io.eigenmill.report;

import java.util.Locale;

/**
 * A small writer of inline SVG (HTML5 syntax: no namespace declaration needed). Coordinates are written with one
 * decimal; every text and attribute value goes through {@link Html#esc}. Text uses the page's generic font stack, so
 * labels are sized from the font size and not from any installed font.
 */
final class Svg {
  /**
   * Advance of a character of the generic sans-serif stack, in ems, on the generous side (wide fonts such as
   * DejaVu Sans average about 0.6): used to reserve room for labels.
   */
  static final double CHAR_EM = 0.64;

  private final StringBuilder b = new StringBuilder(4096);
  private final double width;
  private final double height;

  /** Opens {@code <svg>} with a stable id, the chart class and an accessible title. */
  Svg(String id, double width, double height, String title) {
    this.width = width;
    this.height = height;
    b.append("<svg id=\"").append(Html.esc(id)).append("\" class=\"chart\" viewBox=\"0 0 ").append(n(width))
        .append(' ').append(n(height)).append("\" width=\"").append(n(width)).append("\" height=\"").append(n(height))
        .append("\" role=\"img\" aria-labelledby=\"").append(Html.esc(id)).append("-title\">")
        .append("<title id=\"").append(Html.esc(id)).append("-title\">").append(Html.esc(title)).append("</title>");
  }

  /** A small decorative SVG (legend markers): hidden from screen readers, no id, class "swatch". */
  private Svg(double size) {
    this.width = size;
    this.height = size;
    b.append("<svg class=\"swatch\" viewBox=\"0 0 ").append(n(size)).append(' ').append(n(size))
        .append("\" width=\"").append(n(size)).append("\" height=\"").append(n(size)).append("\" aria-hidden=\"true\">");
  }

  static Svg icon(double size) {
    return new Svg(size);
  }

  double width() {
    return width;
  }

  double height() {
    return height;
  }

  /** Width in user units of {@code text} at {@code size}, estimated from {@link #CHAR_EM}. */
  static double textWidth(String text, double size) {
    return text.codePointCount(0, text.length()) * size * CHAR_EM;
  }

  static String n(double v) {
    if (!Double.isFinite(v)) {
      return "0";
    }
    long tenths = Math.round(v * 10);
    return tenths % 10 == 0 ? Long.toString(tenths / 10) : String.format(Locale.ROOT, "%.1f", tenths / 10.0);
  }

  Svg rect(double x, double y, double w, double h, String fill) {
    return rect(x, y, Math.max(0, w), Math.max(0, h), fill, null);
  }

  Svg rect(double x, double y, double w, double h, String fill, String cls) {
    b.append("<rect x=\"").append(n(x)).append("\" y=\"").append(n(y)).append("\" width=\"").append(n(Math.max(0, w)))
        .append("\" height=\"").append(n(Math.max(0, h))).append("\" fill=\"").append(fill).append('"');
    return closeEmpty(cls);
  }

  Svg line(double x1, double y1, double x2, double y2, String cls) {
    b.append("<line x1=\"").append(n(x1)).append("\" y1=\"").append(n(y1)).append("\" x2=\"").append(n(x2))
        .append("\" y2=\"").append(n(y2)).append('"');
    return closeEmpty(cls);
  }

  /** A polyline through (xs[i], ys[i]). */
  Svg polyline(double[] xs, double[] ys, String cls) {
    b.append("<polyline points=\"");
    for (int i = 0; i < xs.length; i++) {
      b.append(i == 0 ? "" : " ").append(n(xs[i])).append(',').append(n(ys[i]));
    }
    b.append('"');
    return closeEmpty(cls);
  }

  Svg text(double x, double y, String text, String anchor, String cls) {
    b.append("<text x=\"").append(n(x)).append("\" y=\"").append(n(y)).append('"');
    if (!"start".equals(anchor)) {
      b.append(" text-anchor=\"").append(anchor).append('"');
    }
    cls(cls);
    b.append('>').append(Html.esc(text)).append("</text>");
    return this;
  }

  /** Text rotated by -90 degrees about its anchor point (vertical axis titles). */
  Svg verticalText(double x, double y, String text, String cls) {
    b.append("<text x=\"").append(n(x)).append("\" y=\"").append(n(y)).append("\" text-anchor=\"middle\" transform=\"")
        .append("rotate(-90 ").append(n(x)).append(' ').append(n(y)).append(")\"");
    cls(cls);
    b.append('>').append(Html.esc(text)).append("</text>");
    return this;
  }

  /** A marker of the given shape centred on (x, y), {@code r} its half size. */
  Svg marker(Palette.Shape shape, double x, double y, double r, String fill, String cls) {
    switch (shape) {
      case CIRCLE -> b.append("<circle cx=\"").append(n(x)).append("\" cy=\"").append(n(y)).append("\" r=\"")
          .append(n(r)).append('"');
      case SQUARE -> b.append("<rect x=\"").append(n(x - r * 0.9)).append("\" y=\"").append(n(y - r * 0.9))
          .append("\" width=\"").append(n(r * 1.8)).append("\" height=\"").append(n(r * 1.8)).append('"');
      case TRIANGLE -> b.append("<path d=\"M").append(n(x)).append(' ').append(n(y - r * 1.15)).append('L')
          .append(n(x + r * 1.1)).append(' ').append(n(y + r * 0.8)).append('L').append(n(x - r * 1.1)).append(' ')
          .append(n(y + r * 0.8)).append("Z\"");
      case DIAMOND -> b.append("<path d=\"M").append(n(x)).append(' ').append(n(y - r * 1.25)).append('L')
          .append(n(x + r * 1.1)).append(' ').append(n(y)).append('L').append(n(x)).append(' ')
          .append(n(y + r * 1.25)).append('L').append(n(x - r * 1.1)).append(' ').append(n(y)).append("Z\"");
      default -> {
        double a = r * 0.45;
        b.append("<path d=\"M").append(n(x - a)).append(' ').append(n(y - r)).append('H').append(n(x + a))
            .append('V').append(n(y - a)).append('H').append(n(x + r)).append('V').append(n(y + a)).append('H')
            .append(n(x + a)).append('V').append(n(y + r)).append('H').append(n(x - a)).append('V')
            .append(n(y + a)).append('H').append(n(x - r)).append('V').append(n(y - a)).append('H').append(n(x - a))
            .append("Z\"");
      }
    }
    b.append(" fill=\"").append(fill).append('"');
    return closeEmpty(cls);
  }

  /** Opens a group; {@code tooltip} (may be null) becomes its title, shown on hover. */
  Svg group(String cls, String tooltip) {
    b.append("<g");
    cls(cls);
    b.append('>');
    if (tooltip != null) {
      b.append("<title>").append(Html.esc(tooltip)).append("</title>");
    }
    return this;
  }

  Svg end() {
    b.append("</g>");
    return this;
  }

  private void cls(String cls) {
    if (cls != null && !cls.isEmpty()) {
      b.append(" class=\"").append(Html.esc(cls)).append('"');
    }
  }

  private Svg closeEmpty(String cls) {
    cls(cls);
    b.append("/>");
    return this;
  }

  String close() {
    return b.append("</svg>").toString();
  }
}
