package io.eigenmill.math;

/**
 * The fixed sign of each component: the loading with the largest absolute value is positive. When two loadings tie
 * within {@link #TIE} in absolute value, the one with the lower feature index decides. Applied before anything is
 * written, so that every method and every partition count gives the same signs.
 */
public final class SignConvention {
  /** Absolute tolerance under which two loadings count as tied. */
  public static final double TIE = 1e-9;

  private SignConvention() {}

  /** Flips, in place, the columns of the column-major {@code d x r} matrix {@code v} to the convention. */
  public static void apply(double[] v, int d, int r) {
    for (int c = 0; c < r; c++) {
      int off = c * d;
      int lead = 0;
      double best = -1;
      for (int j = 0; j < d; j++) {
        double a = Math.abs(v[off + j]);
        if (a > best + TIE) {
          best = a;
          lead = j;
        }
      }
      if (v[off + lead] < 0) {
        for (int j = 0; j < d; j++) {
          v[off + j] = -v[off + j];
        }
      }
    }
  }
}
