package io.eigenmill.io;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.List;
import java.util.Objects;

/**
 * One mergeable summary inside a snapshot: for one group ({@code group} = null when the fit has no groups; otherwise
 * the group values as text, null elements for null values), counts and moments: rows read, rows used, missing cells
 * per feature, and the moments of the rows used (count {@code n}, per-column {@code shift}, per-column {@code mean}
 * relative to the shift, and {@code packedM2}, the upper triangle of the column-major d x d co-moment matrix packed
 * column by column: for j in 0..d-1, for i in 0..j: M[i][j]; length d(d+1)/2).
 *
 * <p>Equality compares the arrays bit for bit ({@link Double#doubleToRawLongBits}), so that -0.0 and 0.0 differ and
 * a NaN equals only the same NaN.
 */
public record SnapshotEntry(List<String> group, long rowsRead, long rowsUsed, long[] missingCells, long n,
    double[] shift, double[] mean, double[] packedM2) {
  public SnapshotEntry {
    group = group == null ? null : Collections.unmodifiableList(new ArrayList<>(group));
    Objects.requireNonNull(missingCells, "missingCells");
    Objects.requireNonNull(shift, "shift");
    Objects.requireNonNull(mean, "mean");
    Objects.requireNonNull(packedM2, "packedM2");
  }

  /** Length of the packed upper triangle of a d x d matrix. */
  public static int packedLength(int d) {
    return d * (d + 1) / 2;
  }

  /** Index of M[i][j], i &lt;= j, in the packed upper triangle. */
  public static int packedIndex(int i, int j) {
    return j * (j + 1) / 2 + i;
  }

  /** The problem with the array lengths for d features, or null when they fit. */
  String shapeProblem(int d) {
    if (missingCells.length != d || shift.length != d || mean.length != d || packedM2.length != packedLength(d)) {
      return "entry " + group + " has missingCells " + missingCells.length + ", shift " + shift.length + ", mean "
          + mean.length + ", packedM2 " + packedM2.length + " values; " + d + " features need " + d + ", " + d
          + ", " + d + ", " + packedLength(d);
    }
    return null;
  }

  @Override
  public boolean equals(Object o) {
    return o instanceof SnapshotEntry e && Objects.equals(group, e.group) && rowsRead == e.rowsRead
        && rowsUsed == e.rowsUsed && n == e.n && Arrays.equals(missingCells, e.missingCells)
        && sameBits(shift, e.shift) && sameBits(mean, e.mean) && sameBits(packedM2, e.packedM2);
  }

  @Override
  public int hashCode() {
    int h = Objects.hash(group, rowsRead, rowsUsed, n);
    h = 31 * h + Arrays.hashCode(missingCells);
    for (double[] a : new double[][] {shift, mean, packedM2}) {
      for (double v : a) {
        h = 31 * h + Long.hashCode(Double.doubleToRawLongBits(v));
      }
    }
    return h;
  }

  @Override
  public String toString() {
    return "SnapshotEntry[group=" + group + ", rowsRead=" + rowsRead + ", rowsUsed=" + rowsUsed + ", n=" + n
        + ", d=" + shift.length + "]";
  }

  static boolean sameBits(double[] a, double[] b) {
    if (a.length != b.length) {
      return false;
    }
    for (int i = 0; i < a.length; i++) {
      if (Double.doubleToRawLongBits(a[i]) != Double.doubleToRawLongBits(b[i])) {
        return false;
      }
    }
    return true;
  }
}
