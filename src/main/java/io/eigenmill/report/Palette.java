package io.eigenmill.report;

import java.util.List;
import java.util.Locale;

/**
 * The report's colours. The categorical colours differ in lightness as well as along the blue-orange axis, which
 * stays visible to readers with deuteranopia or protanopia; clusters also get distinct marker shapes, so colour is
 * never the only cue. Signed values use a blue (negative) to orange (positive) scale through a light neutral at zero.
 * The test {@code PaletteTest} checks the categorical colours stay apart under simulated colour-vision deficiencies.
 */
final class Palette {
  /** Categorical colours, in the order clusters receive them. */
  static final List<String> CATEGORICAL = List.of(
      "#24589a", "#e37f1c", "#93cdee", "#6e3a0c", "#f2d65e", "#454545", "#c680bb", "#139a8f");

  /** Marker shapes, cycled together with the colours (offset so that colour and shape repeat at different k). */
  enum Shape { CIRCLE, SQUARE, TRIANGLE, DIAMOND, CROSS }

  /** Diverging anchors from -1 to +1: dark blue, mid blue, neutral, mid orange, dark orange. */
  static final List<String> DIVERGING = List.of("#174a8b", "#6d9fd3", "#f3f1ec", "#e9a058", "#9a4807");

  /** Kept components, discarded components, and the accent of limits and markers. */
  static final String KEPT = "#24589a";
  static final String DISCARDED = "#b9cde4";
  static final String ACCENT = "#c4600a";
  static final String INK = "#1d232b";
  static final String MUTED = "#5c6672";
  static final String GRID = "#e3e6ea";

  private Palette() {}

  static String category(int i) {
    return CATEGORICAL.get(Math.floorMod(i, CATEGORICAL.size()));
  }

  static Shape shape(int i) {
    return Shape.values()[Math.floorMod(i, Shape.values().length)];
  }

  /** The colour of {@code t} in [-1, 1] (clamped) on the diverging scale, interpolated between the anchors. */
  static String diverging(double t) {
    double c = Double.isNaN(t) ? 0 : Math.max(-1, Math.min(1, t));
    double pos = (c + 1) / 2 * (DIVERGING.size() - 1);
    int a = Math.min(DIVERGING.size() - 2, (int) Math.floor(pos));
    double f = pos - a;
    int[] x = rgb(DIVERGING.get(a));
    int[] y = rgb(DIVERGING.get(a + 1));
    return String.format(Locale.ROOT, "#%02x%02x%02x", mix(x[0], y[0], f), mix(x[1], y[1], f), mix(x[2], y[2], f));
  }

  /** Dark text on light cells, white text on dark ones (relative luminance below 0.33). */
  static String textOn(String hex) {
    int[] c = rgb(hex);
    double l = 0.2126 * linear(c[0]) + 0.7152 * linear(c[1]) + 0.0722 * linear(c[2]);
    return l < 0.33 ? "#ffffff" : INK;
  }

  static int[] rgb(String hex) {
    int v = Integer.parseInt(hex.substring(1), 16);
    return new int[] {v >> 16 & 255, v >> 8 & 255, v & 255};
  }

  static double linear(int channel) {
    double c = channel / 255.0;
    return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
  }

  private static int mix(int a, int b, double f) {
    return (int) Math.round(a + (b - a) * f);
  }
}
