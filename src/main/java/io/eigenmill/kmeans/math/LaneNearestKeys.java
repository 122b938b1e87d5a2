package io.eigenmill.kmeans.math;

import jdk.incubator.vector.DoubleVector;
import jdk.incubator.vector.VectorMask;
import jdk.incubator.vector.VectorSpecies;

/**
 * The SIMD kernel of {@link NearestKeys}: rows in groups of the preferred number of double lanes, each group's
 * running minimum kept in one register while the run's centroids stream past (one contiguous column of scores per
 * centroid). Per lane and centroid: two additions (in the scalar kernel's order), a maximum with 0 (the clamp of a
 * negative rounded distance), the tag put in the low bits through the integral view of the lanes, and a comparison
 * of the keys viewed as doubles: non-negative doubles order like their bit patterns, so this is the scalar kernel's
 * minimum of longs, with instructions every x86-64 vector unit has (there is no 64-bit integer minimum before
 * AVX-512). The same comparison carries the chosen centroid's distance along in a second register, so no second
 * look-up is needed. Rows past the last full group take the scalar loop. Loaded only when the JVM resolved
 * {@code jdk.incubator.vector} ({@link NearestKeys#best}).
 */
final class LaneNearestKeys implements NearestKeys {
  private static final VectorSpecies<Double> LANES = DoubleVector.SPECIES_PREFERRED;

  static int lanes() {
    return LANES.length();
  }

  @Override
  public void smallest(double[] product, int ld, double[] norms, int first, int count, double[] rowNorm, int rows,
      long tags, long[] keys, double[] distances, int at) {
    long high = ~tags;
    int step = LANES.length();
    int upper = LANES.loopBound(rows);
    int i = 0;
    for (; i < upper; i += step) {
      DoubleVector norm = DoubleVector.fromArray(LANES, rowNorm, i);
      // starting from centroid 0 (not a sentinel), the result is always one of the centroids' keys
      DoubleVector nearest = distances(norm, product, first * ld + i, norms[first]);
      DoubleVector best = keys(nearest, high, 0);
      for (int t = 1; t < count; t++) {
        DoubleVector d2 = distances(norm, product, (first + t) * ld + i, norms[first + t]);
        DoubleVector key = keys(d2, high, t);
        VectorMask<Double> closer = key.lt(best); // keys differ in their tags: never equal
        best = best.blend(key, closer);
        nearest = nearest.blend(d2, closer);
      }
      best.reinterpretAsLongs().intoArray(keys, i);
      nearest.intoArray(distances, at + i);
    }
    for (; i < rows; i++) {
      long best = Long.MAX_VALUE;
      for (int t = 0; t < count; t++) {
        best = Scalar.min(best, Scalar.key(rowNorm[i] + (product[(first + t) * ld + i] + norms[first + t]), high,
            t));
      }
      keys[i] = best;
      int j = first + (int) (best & tags);
      distances[at + i] = Math.max(0.0, rowNorm[i] + (product[j * ld + i] + norms[j]));
    }
  }

  /** The clamped squared distances of one centroid for one group of rows. */
  private static DoubleVector distances(DoubleVector rowNorm, double[] product, int at, double norm) {
    return rowNorm.add(DoubleVector.fromArray(LANES, product, at).add(norm)).max(0.0);
  }

  /** The keys of those distances, viewed as doubles. */
  private static DoubleVector keys(DoubleVector d2, long high, int t) {
    return d2.reinterpretAsLongs().and(high).or(t).reinterpretAsDoubles();
  }

  @Override
  public String describe() {
    return "SIMD, " + LANES.length() + " double lanes";
  }
}
