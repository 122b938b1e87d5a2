package io.eigenmill.kmeans;

/**
 * Quality measures computed straight from their published definitions, point by point, sharing no code with the
 * product: the silhouette (Rousseeuw 1987: s(i) = (b - a) / max(a, b), 0 for a point alone in its cluster),
 * Calinski-Harabasz (Calinski and Harabasz 1974: [B / (k - 1)] / [W / (n - k)], B = sum_j n_j ||c_j - mean||^2),
 * Davies-Bouldin (Davies and Bouldin 1979, q = 1, p = 2: mean over clusters of max_j (S_i + S_j) / M_ij).
 * Points are {@code double[n][d]}, labels in [0, k).
 */
public final class BruteForce {
  private BruteForce() {}

  public static double silhouette(double[][] x, int[] lab, int k) {
    int n = x.length;
    double total = 0;
    for (int i = 0; i < n; i++) {
      double[] sum = new double[k];
      int[] count = new int[k];
      for (int j = 0; j < n; j++) {
        if (j != i) {
          sum[lab[j]] += Math.sqrt(dist2(x[i], x[j]));
          count[lab[j]]++;
        }
      }
      if (count[lab[i]] == 0) {
        continue;
      }
      double a = sum[lab[i]] / count[lab[i]];
      double b = Double.POSITIVE_INFINITY;
      for (int c = 0; c < k; c++) {
        if (c != lab[i] && count[c] > 0) {
          b = Math.min(b, sum[c] / count[c]);
        }
      }
      double top = Math.max(a, b);
      total += top == 0 ? 0 : (b - a) / top;
    }
    return total / n;
  }

  /** Cluster means, {@code [k][d]}. */
  public static double[][] means(double[][] x, int[] lab, int k) {
    int d = x[0].length;
    double[][] c = new double[k][d];
    int[] count = new int[k];
    for (int i = 0; i < x.length; i++) {
      count[lab[i]]++;
      for (int l = 0; l < d; l++) {
        c[lab[i]][l] += x[i][l];
      }
    }
    for (int j = 0; j < k; j++) {
      for (int l = 0; l < d; l++) {
        c[j][l] /= count[j];
      }
    }
    return c;
  }

  public static double wcss(double[][] x, int[] lab, int k) {
    double[][] c = means(x, lab, k);
    double w = 0;
    for (int i = 0; i < x.length; i++) {
      w += dist2(x[i], c[lab[i]]);
    }
    return w;
  }

  public static double calinskiHarabasz(double[][] x, int[] lab, int k) {
    int n = x.length;
    double[] mean = means(x, new int[n], 1)[0];
    double[][] c = means(x, lab, k);
    int[] count = new int[k];
    for (int l : lab) {
      count[l]++;
    }
    double between = 0;
    for (int j = 0; j < k; j++) {
      between += count[j] * dist2(c[j], mean);
    }
    return (between / (k - 1)) / (wcss(x, lab, k) / (n - k));
  }

  public static double daviesBouldin(double[][] x, int[] lab, int k) {
    double[][] c = means(x, lab, k);
    double[] s = new double[k];
    int[] count = new int[k];
    for (int i = 0; i < x.length; i++) {
      s[lab[i]] += Math.sqrt(dist2(x[i], c[lab[i]]));
      count[lab[i]]++;
    }
    for (int j = 0; j < k; j++) {
      s[j] /= count[j];
    }
    double db = 0;
    for (int i = 0; i < k; i++) {
      double worst = 0;
      for (int j = 0; j < k; j++) {
        if (j != i) {
          worst = Math.max(worst, (s[i] + s[j]) / Math.sqrt(dist2(c[i], c[j])));
        }
      }
      db += worst / k;
    }
    return db;
  }

  public static double dist2(double[] a, double[] b) {
    double s = 0;
    for (int l = 0; l < a.length; l++) {
      s += (a[l] - b[l]) * (a[l] - b[l]);
    }
    return s;
  }

  /** Index of the nearest centre, ties to the lower index. */
  public static int nearest(double[] x, double[][] centres) {
    int best = 0;
    for (int j = 1; j < centres.length; j++) {
      if (dist2(x, centres[j]) < dist2(x, centres[best])) {
        best = j;
      }
    }
    return best;
  }
}
