package io.eigenmill.kmeans.math;

import io.eigenmill.math.SeedStream;
import java.util.SplittableRandom;

/**
 * The driver-side last step of k-means|| (Bahmani, Moseley, Vattani, Kumar and Vassilvitskii 2012, "Scalable
 * k-means++", PVLDB 5(7), step 8 of Algorithm 2): the candidates sampled in the rounds, each weighted by the number of
 * rows nearest to it, are reduced to k starting centroids by weighted k-means++ (Arthur and Vassilvitskii 2007,
 * "k-means++: the advantages of careful seeding", SODA) followed by weighted Lloyd iterations on the candidates alone.
 * Pure functions over point-major arrays; the candidates are few (about 2k per round), so this costs nothing next to
 * a pass over the data.
 */
public final class KMeansSeeding {
  private KMeansSeeding() {}

  /**
   * Weighted k-means++: the first centre is drawn with probability proportional to the weight, each next one with
   * probability proportional to weight x squared distance to the nearest centre chosen so far.
   *
   * @param points point-major {@code m x d}, pairwise distinct
   * @param weights non-negative, at least k of them positive
   * @param stream seed of the draws ({@link SeedStream#stream})
   * @return point-major {@code k x d} centres, each one of the points
   * @throws IllegalArgumentException when fewer than k distinct points have positive weight
   */
  public static double[] plusPlus(double[] points, double[] weights, int m, int d, int k, long stream) {
    SplittableRandom random = new SplittableRandom(stream);
    double[] centres = new double[k * d];
    double[] nearest2 = new double[m];
    java.util.Arrays.fill(nearest2, Double.POSITIVE_INFINITY);
    double[] mass = new double[m];
    for (int c = 0; c < k; c++) {
      double total = 0;
      for (int i = 0; i < m; i++) {
        mass[i] = c == 0 ? weights[i] : weights[i] * nearest2[i];
        total += mass[i];
      }
      if (!(total > 0)) {
        throw new IllegalArgumentException("k-means++ needs " + k + " distinct weighted points, found only " + c);
      }
      int pick = draw(mass, m, total, random);
      System.arraycopy(points, pick * d, centres, c * d, d);
      for (int i = 0; i < m; i++) {
        double d2 = distance2(points, i * d, centres, c * d, d);
        if (d2 < nearest2[i]) {
          nearest2[i] = d2;
        }
      }
    }
    return centres;
  }

  private static int draw(double[] mass, int m, double total, SplittableRandom random) {
    double target = random.nextDouble() * total;
    double acc = 0;
    int last = -1;
    for (int i = 0; i < m; i++) {
      if (mass[i] > 0) {
        acc += mass[i];
        last = i;
        if (acc > target) {
          return i;
        }
      }
    }
    return last;
  }

  /**
   * Weighted Lloyd iterations on the candidates, in place on {@code centres}: each point goes to its nearest centre
   * (ties to the lower index), each centre moves to the weighted mean of its points; a centre with no weight keeps
   * its place. Stops when no point changes centre or after {@code maxIterations}.
   *
   * @return the number of iterations run
   */
  public static int lloyd(double[] points, double[] weights, int m, int d, double[] centres, int k,
      int maxIterations) {
    int[] owner = new int[m];
    java.util.Arrays.fill(owner, -1);
    double[] sums = new double[k * d];
    double[] mass = new double[k];
    for (int it = 1; it <= maxIterations; it++) {
      boolean changed = false;
      for (int i = 0; i < m; i++) {
        int best = nearest(points, i * d, centres, k, d);
        if (best != owner[i]) {
          owner[i] = best;
          changed = true;
        }
      }
      if (!changed) {
        return it - 1;
      }
      java.util.Arrays.fill(sums, 0.0);
      java.util.Arrays.fill(mass, 0.0);
      for (int i = 0; i < m; i++) {
        int c = owner[i];
        mass[c] += weights[i];
        for (int l = 0; l < d; l++) {
          sums[c * d + l] += weights[i] * points[i * d + l];
        }
      }
      for (int c = 0; c < k; c++) {
        if (mass[c] > 0) {
          for (int l = 0; l < d; l++) {
            centres[c * d + l] = sums[c * d + l] / mass[c];
          }
        }
      }
    }
    return maxIterations;
  }

  /** Index of the centre nearest to the point at {@code points[off..off+d)}; ties to the lower index. */
  public static int nearest(double[] points, int off, double[] centres, int k, int d) {
    int best = 0;
    double bestD2 = Double.POSITIVE_INFINITY;
    for (int c = 0; c < k; c++) {
      double d2 = distance2(points, off, centres, c * d, d);
      if (d2 < bestD2) {
        bestD2 = d2;
        best = c;
      }
    }
    return best;
  }

  /** Squared Euclidean distance between two point-major points. */
  public static double distance2(double[] a, int aoff, double[] b, int boff, int d) {
    double s = 0;
    for (int l = 0; l < d; l++) {
      double t = a[aoff + l] - b[boff + l];
      s += t * t;
    }
    return s;
  }
}
