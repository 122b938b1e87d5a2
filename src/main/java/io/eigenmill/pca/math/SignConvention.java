package io.eigenmill.pca.math;

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
      double max = 0;
      for (int j = 0; j < d; j++) {
        max = Math.max(max, Math.abs(v[off + j]));
      }
      // ties are measured against the largest entry, not against whichever entry a scan happens to hold
      int lead = 0;
      while (lead < d - 1 && Math.abs(v[off + lead]) < max - TIE) {
        lead++;
      }
      if (v[off + lead] < 0) {
        for (int j = 0; j < d; j++) {
          v[off + j] = -v[off + j];
        }
      }
    }
  }
}
