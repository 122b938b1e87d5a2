package io.eigenmill.monitor.math;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.SplittableRandom;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.apache.commons.math3.stat.descriptive.moment.Variance;
import org.junit.jupiter.api.Test;

/** The moments of scored rows against a model, block by block and merged, against Commons Math over all rows. */
class DriftMomentsTest {

  @Test
  void blocksAndMergesMatchCommonsMathFarFromZero() {
    int d = 3;
    int k = 2;
    int n = 5000;
    SplittableRandom r = new SplittableRandom(5);
    // feature 0 sits at 1e9 with sd 1e-3 around a model mean 1e9 + 2e-3: the deviation keeps its digits
    double[] modelMeans = {1e9 + 2e-3, 5.0, -3.0};
    double[][] x = new double[d][n];
    double[][] p = new double[k][n];
    double[][] res = new double[d][n];
    for (int i = 0; i < n; i++) {
      x[0][i] = 1e9 + 1e-3 * r.nextDouble();
      x[1][i] = 5 + 2 * r.nextDouble();
      x[2][i] = -3 + 0.1 * r.nextDouble();
      p[0][i] = 4 * r.nextDouble() - 2;
      p[1][i] = r.nextDouble();
      for (int j = 0; j < d; j++) {
        res[j][i] = 1e-4 * (r.nextDouble() - 0.5);
      }
    }
    // three partitions of uneven blocks, merged in order
    int[] cuts = {0, 1024, 1500, 2524, 3000, 5000};
    DriftMoments total = new DriftMoments(d, k);
    DriftMoments part = new DriftMoments(d, k);
    for (int b = 0; b + 1 < cuts.length; b++) {
      int rows = cuts[b + 1] - cuts[b];
      int ld = rows + 7;
      double[] xb = new double[ld * d];
      double[] pb = new double[rows * k];
      double[] rb = new double[rows * d];
      for (int i = 0; i < rows; i++) {
        for (int j = 0; j < d; j++) {
          xb[j * ld + i] = x[j][cuts[b] + i];
          rb[j * rows + i] = res[j][cuts[b] + i];
        }
        for (int c = 0; c < k; c++) {
          pb[c * rows + i] = p[c][cuts[b] + i];
        }
      }
      part.addBlock(xb, ld, rows, modelMeans, pb, rb);
      if (b % 2 == 1) {
        total.merge(part);
        part = new DriftMoments(d, k);
      }
    }
    total.merge(part);
    assertEquals(n, total.rows());
    for (int j = 0; j < d; j++) {
      // Commons Math Mean and Variance (n - 1) of the deviations, computed here in plain doubles: x - mean is exact
      // for feature 0 (Sterbenz: both near 1e9), so both sides see the same values; sums of 5000 values agree to
      // about n eps relative (5.5e-13): 1e-10 relative is generous
      double[] dev = new double[n];
      for (int i = 0; i < n; i++) {
        dev[i] = x[j][i] - modelMeans[j];
      }
      double mean = new Mean().evaluate(dev);
      double var = new Variance().evaluate(x[j]);
      assertEquals(mean, total.meanShift(j), 1e-10 * Math.abs(mean) + 1e-18, "mean shift " + j);
      assertEquals(new Variance().evaluate(dev), total.featureVariance(j), 1e-10 * var, "variance " + j);
      assertEquals(new Variance().evaluate(res[j]), total.residualVariance(j), 1e-10 * total.residualVariance(j));
    }
    for (int c = 0; c < k; c++) {
      assertEquals(new Mean().evaluate(p[c]), total.scoreMean(c), 1e-12);
      assertEquals(new Variance().evaluate(p[c]), total.scoreVariance(c), 1e-10 * total.scoreVariance(c));
    }
  }
}
