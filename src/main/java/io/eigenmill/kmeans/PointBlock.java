package io.eigenmill.kmeans;

import io.eigenmill.kmeans.math.NearestSearch;
import java.io.Serializable;

/**
 * A block of clustered points as cached on the executors: {@code rows x d} doubles, column-major with leading
 * dimension {@code rows}, the 64-bit identity of each row (a hash of its values, or of its entity key), and the
 * number of rows skipped since the previous block because a coordinate was null, NaN or infinite. A block may hold
 * no rows and only a skipped count.
 *
 * <p><b>Frame.</b> The search passes work in coordinates shifted by the data mean (see {@link ClusterPasses}). The
 * first of them shifts each cached block in place ({@link #toFrame}) and records the shift and the rows' squared
 * norms in it, so later passes hand the block's own arrays to BLAS with no copy and no norm sweep. The values are
 * then computed once from the values as read, exactly as a fresh copy minus the shift would be, so every pass sees
 * the same numbers as if it had copied. A block dropped by the cache and computed again comes back as read (no
 * frame) and is shifted again. Blocks are held deserialized ({@code MEMORY_ONLY}), so the change persists; under a
 * serialized storage level each pass would shift a fresh copy, with the same results.
 */
public final class PointBlock implements Serializable {
  private static final long serialVersionUID = 1L;

  final int rows;
  final int d;
  final double[] values;
  final long[] ids;
  final long skipped;
  /** The shift subtracted from {@link #values} (null: as read). */
  private double[] frame;
  /** Squared norms of the rows in {@link #frame} (null while there is no frame). */
  private double[] norms;

  PointBlock(int rows, int d, double[] values, long[] ids, long skipped) {
    this.rows = rows;
    this.d = d;
    this.values = values;
    this.ids = ids;
    this.skipped = skipped;
  }

  /**
   * Brings the values to coordinates shifted by {@code shift} (null: as read), in place, and returns the rows'
   * squared norms in that frame (null for the frame as read). Once in a frame, asking for it again costs one
   * comparison of d values. Synchronized: two attempts of the same task (speculation) may share cached blocks.
   */
  synchronized double[] toFrame(double[] shift) {
    if (java.util.Arrays.equals(frame, shift)) {
      return norms;
    }
    for (int l = 0; l < d; l++) {
      // from the values as read: v + frame (exact when there is no frame), then minus the shift
      double from = frame == null ? 0.0 : frame[l];
      double to = shift == null ? 0.0 : shift[l];
      int at = l * rows;
      for (int i = 0; i < rows; i++) {
        values[at + i] = frame == null ? values[at + i] - to : values[at + i] + from - to;
      }
    }
    frame = shift == null ? null : shift.clone();
    if (shift == null) {
      norms = null;
    } else {
      norms = new double[rows];
      NearestSearch.squaredNorms(values, 0, rows, rows, d, norms);
    }
    return norms;
  }

  public int rows() {
    return rows;
  }

  public long skipped() {
    return skipped;
  }
}
