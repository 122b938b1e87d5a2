package io.eigenmill.kmeans.math;

import io.eigenmill.math.SimdChoice;

/**
 * The innermost loop of {@link NearestSearch}'s nearest-only search: for every row of a chunk, the smallest key over
 * one run's centroids, where the key of centroid t is the bit pattern of the squared distance
 * {@code rowNorm[i] + (product[(first + t) * ld + i] + norms[first + t])}, clamped at 0, with its lowest bits
 * (those set in {@code tags}) replaced by t. Keys of non-negative doubles order like the doubles, so the smallest
 * key names the nearest centroid, ties (within 2^bits units in the last place) going to the lower t.
 *
 * <p>Two kernels compute it: {@link Scalar}, a branch-free loop over longs, and a SIMD kernel over the lanes of the
 * machine's preferred vector width ({@code LaneNearestKeys}, built on the JDK's incubating vector module), about 5x
 * faster on 8 lanes. They give the same keys bit for bit whenever every squared distance is a number (rows and
 * centroids finite, their norms below about 1e154): the additions are the same IEEE operations in the same order,
 * and the lanes take the minimum of the keys viewed as doubles, which orders them as their bits do. {@link #best}
 * picks one by the rule of {@link SimdChoice}.
 */
public interface NearestKeys {
  /**
   * Writes {@code keys[0 .. rows)}: for row i, the smallest key over centroids {@code first .. first + count - 1};
   * and {@code distances[at + i]}: the squared distance (clamped at 0, not truncated) of the centroid that key names.
   *
   * @param product column-major scores, centroid j's of row i at {@code j * ld + i}
   * @param tags the low bits that carry the centroid's place t: 2^bits - 1 with 2^bits >= count
   */
  void smallest(double[] product, int ld, double[] norms, int first, int count, double[] rowNorm, int rows,
      long tags, long[] keys, double[] distances, int at);

  /** What the kernel is, for logs and benchmark notes: "scalar" or "SIMD, 8 double lanes". */
  String describe();

  /** The kernel of this JVM (chosen once). */
  static NearestKeys best() {
    return Chosen.KERNEL;
  }

  /** The branch-free scalar kernel: the fallback, and the reference of the SIMD kernel's tests. */
  final class Scalar implements NearestKeys {
    @Override
    public void smallest(double[] product, int ld, double[] norms, int first, int count, double[] rowNorm,
        int rows, long tags, long[] keys, double[] distances, int at) {
      long high = ~tags;
      java.util.Arrays.fill(keys, 0, rows, Long.MAX_VALUE);
      // centroid by centroid, rows inner: long independent loops over contiguous scores
      for (int t = 0; t < count; t++) {
        int col = (first + t) * ld;
        double norm = norms[first + t];
        for (int i = 0; i < rows; i++) {
          keys[i] = min(keys[i], key(rowNorm[i] + (product[col + i] + norm), high, t));
        }
      }
      for (int i = 0; i < rows; i++) {
        int j = first + (int) (keys[i] & tags);
        distances[at + i] = Math.max(0.0, rowNorm[i] + (product[j * ld + i] + norms[j]));
      }
    }

    @Override
    public String describe() {
      return "scalar";
    }

    /** The key of a squared distance: its bits (0 when negative) with the low bits replaced by the tag. */
    static long key(double distance2, long high, int tag) {
      long bits = Double.doubleToRawLongBits(distance2);
      bits &= ~(bits >> 63); // a negative (rounded) distance counts as 0
      return (bits & high) | tag;
    }

    /** The smaller of two non-negative longs, without a branch (their difference cannot overflow). */
    static long min(long a, long b) {
      long diff = a - b;
      return b + (diff & (diff >> 63));
    }
  }

  /** Lazy holder of the chosen kernel. */
  final class Chosen {
    static final NearestKeys KERNEL = choose(SimdChoice.SETTING, SimdChoice.MODULE);

    private Chosen() {}

    /** By the rule of {@link SimdChoice}. */
    static NearestKeys choose(String setting, boolean moduleResolved) {
      return SimdChoice.choose(setting, moduleResolved,
          () -> LaneNearestKeys.lanes() >= SimdChoice.MIN_LANES ? new LaneNearestKeys() : null, new Scalar());
    }
  }
}
