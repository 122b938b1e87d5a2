package io.eigenmill.report;

import java.util.ArrayList;
import java.util.List;

/**
 * Maps data values to chart coordinates, linearly or on a base-10 log scale, and proposes round tick values.
 * Geometry only: the values themselves come from the result records.
 *
 * @param lo smallest value of the domain (positive on a log scale)
 * @param hi largest value of the domain
 * @param from coordinate of {@code lo}
 * @param to coordinate of {@code hi} (smaller than {@code from} for a y axis)
 */
record Scale(double lo, double hi, double from, double to, boolean log) {

  /** A linear scale over [min, max] widened to round tick values; a single value gets a unit-wide domain. */
  static Scale linear(double min, double max, double from, double to) {
    if (!(max > min)) {
      double pad = min == 0 || !Double.isFinite(min) ? 1 : Math.abs(min) * 0.5;
      min = Double.isFinite(min) ? min - pad : -1;
      max = Double.isFinite(max) ? max + pad : 1;
    }
    double step = niceStep(max - min, 5);
    return new Scale(Math.floor(min / step) * step, Math.ceil(max / step) * step, from, to, false);
  }

  /** A linear scale exactly over [min, max] (no widening), e.g. 0..1 for shares. */
  static Scale exact(double min, double max, double from, double to) {
    return new Scale(min, max, from, to, false);
  }

  /** A log scale over whole decades covering [minPositive, max]. */
  static Scale log(double minPositive, double max, double from, double to) {
    double lo = Math.pow(10, Math.floor(Math.log10(minPositive)));
    double hi = Math.pow(10, Math.ceil(Math.log10(max)));
    if (hi <= lo) {
      hi = lo * 10;
    }
    return new Scale(lo, hi, from, to, true);
  }

  /**
   * True when the positive values span more than {@code decades} decades: a linear axis would flatten all but the
   * largest of them.
   */
  static boolean spansDecades(double[] values, double decades) {
    double max = 0;
    double min = Double.POSITIVE_INFINITY;
    for (double v : values) {
      if (v > 0 && Double.isFinite(v)) {
        max = Math.max(max, v);
        min = Math.min(min, v);
      }
    }
    return max > 0 && max / min > Math.pow(10, decades);
  }

  double map(double v) {
    double t;
    if (log) {
      double clamped = Math.max(v, lo);
      t = (Math.log10(clamped) - Math.log10(lo)) / (Math.log10(hi) - Math.log10(lo));
    } else {
      t = (v - lo) / (hi - lo);
    }
    return from + t * (to - from);
  }

  /** Round tick values inside the domain: multiples of a 1-2-5 step, or whole decades (at most about 8). */
  List<Double> ticks() {
    List<Double> out = new ArrayList<>();
    if (log) {
      int a = (int) Math.round(Math.log10(lo));
      int b = (int) Math.round(Math.log10(hi));
      int every = Math.max(1, (int) Math.ceil((b - a) / 8.0));
      for (int e = a; e <= b; e += every) {
        out.add(Math.pow(10, e));
      }
      return out;
    }
    double step = niceStep(hi - lo, 5);
    long first = Math.round(Math.ceil(lo / step - 1e-9));
    for (long i = first; i * step <= hi + step * 1e-9; i++) {
      out.add(i * step);
    }
    return out;
  }

  /** The label of a tick value, with as many decimals as the tick step needs. */
  String label(double v) {
    if (log) {
      int e = (int) Math.round(Math.log10(v));
      return e >= -3 && e <= 6 ? Fmt.num(Math.pow(10, e)) : "1e" + e;
    }
    double step = niceStep(hi - lo, 5);
    double magnitude = Math.max(Math.abs(lo), Math.abs(hi));
    if (magnitude >= 1e6 || step < 1e-4) {
      return Math.abs(v) < step * 1e-6 ? "0" : Fmt.num(v, 3);
    }
    int decimals = Math.max(0, (int) -Math.floor(Math.log10(step) + 1e-9));
    return decimals == 0 ? Fmt.count(Math.round(v)) : Fmt.fixed(v, decimals);
  }

  /** A step of 1, 2 or 5 times a power of ten that cuts {@code span} into about {@code parts} pieces. */
  static double niceStep(double span, int parts) {
    double raw = span / parts;
    double power = Math.pow(10, Math.floor(Math.log10(raw)));
    double f = raw / power;
    double nice = f < 1.5 ? 1 : f < 3.5 ? 2 : f < 7.5 ? 5 : 10;
    return nice * power;
  }
}
