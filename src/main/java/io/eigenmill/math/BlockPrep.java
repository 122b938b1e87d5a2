package io.eigenmill.math;

import java.io.Serializable;

/**
 * What is done to a block of raw feature values before it is aggregated: missing cells (NaN) replaced by an
 * imputation value, then x -> (x - centre) * factor per column, then only the columns listed in {@code keep} are
 * moved, in order, to the front of the block (dropped constant columns vanish without changing which rows are read).
 * {@link #identity} leaves blocks unchanged.
 */
public final class BlockPrep implements Serializable {
  private static final long serialVersionUID = 1L;

  private final double[] impute;
  private final double[] centre;
  private final double[] factor;
  private final int[] keep;

  private BlockPrep(double[] impute, double[] centre, double[] factor, int[] keep) {
    this.impute = impute;
    this.centre = centre;
    this.factor = factor;
    this.keep = keep;
  }

  public static BlockPrep identity() {
    return new BlockPrep(null, null, null, null);
  }

  /** Replace NaN cells of column j by {@code values[j]}; nothing else. */
  public static BlockPrep imputeOnly(double[] values) {
    return new BlockPrep(values.clone(), null, null, null);
  }

  /**
   * Optional imputation ({@code impute} may be null), centring, multiplication by {@code factor}, then keeping the
   * columns {@code keep} (increasing indices; null keeps all).
   */
  public static BlockPrep of(double[] impute, double[] centre, double[] factor, int[] keep) {
    return new BlockPrep(impute == null ? null : impute.clone(), centre.clone(), factor.clone(),
        keep == null ? null : keep.clone());
  }

  /** Whether {@link #apply} leaves every block unchanged. */
  public boolean isIdentity() {
    return impute == null && centre == null && keep == null;
  }

  /** Applies the preparation in place to a column-major {@code rows x d} block with leading dimension ld. */
  public void apply(double[] block, int rows, int ld) {
    if (isIdentity()) {
      return;
    }
    int d = impute != null ? impute.length : centre != null ? centre.length : 0;
    for (int j = 0; j < d; j++) {
      int off = j * ld;
      if (impute != null) {
        double fill = impute[j];
        for (int i = 0; i < rows; i++) {
          if (Double.isNaN(block[off + i])) {
            block[off + i] = fill;
          }
        }
      }
      if (centre != null) {
        double c = centre[j];
        double f = factor[j];
        for (int i = 0; i < rows; i++) {
          block[off + i] = (block[off + i] - c) * f;
        }
      }
    }
    if (keep != null) {
      for (int jj = 0; jj < keep.length; jj++) {
        if (keep[jj] != jj) {
          System.arraycopy(block, keep[jj] * ld, block, jj * ld, rows);
        }
      }
    }
  }
}
