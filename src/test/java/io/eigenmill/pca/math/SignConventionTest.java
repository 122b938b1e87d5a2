package io.eigenmill.pca.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.MathFixtures;
import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * {@link SignConvention} against its specification, which is also the convention of the reference datasets
 * (src/test/resources/datasets/README.md, "sign: each component is multiplied by +-1 so that its entry of largest
 * absolute value is positive; if two entries tie within 1e-9 the one with the lower feature index wins"), checked by
 * brute force and on the loadings published in those datasets' reference JSON (R 4.2.2 prcomp, signs fixed there).
 */
class SignConventionTest {

  /** Brute force: the lowest index whose |v| is within TIE of the column's maximum |v|. */
  static int leader(double[] v, int d, int c) {
    double max = 0;
    for (int j = 0; j < d; j++) {
      max = Math.max(max, Math.abs(v[j + c * d]));
    }
    for (int j = 0; j < d; j++) {
      if (Math.abs(v[j + c * d]) >= max - SignConvention.TIE) {
        return j;
      }
    }
    throw new AssertionError();
  }

  @Test
  void theLargestLoadingBecomesPositiveAndColumnsOnlyChangeSign() {
    int d = 9;
    int r = 40;
    double[] v = MathFixtures.gaussian(d, r, 81);
    double[] original = v.clone();
    SignConvention.apply(v, d, r);
    for (int c = 0; c < r; c++) {
      int lead = leader(original, d, c);
      assertTrue(v[lead + c * d] > 0, "column " + c + ": leading loading " + v[lead + c * d]);
      double sign = Math.signum(v[lead + c * d]) * Math.signum(original[lead + c * d]);
      for (int j = 0; j < d; j++) {
        // negation is exact
        assertEquals(sign * original[j + c * d], v[j + c * d], 0.0, "column " + c + ", row " + j);
      }
    }
  }

  @Test
  void aTieWithinTheToleranceIsDecidedByTheLowerIndex() {
    double t = SignConvention.TIE;
    // |v1| exceeds |v0| by half the tolerance: a tie, so v0 (negative) decides and the column flips
    double[] v = {-0.6, 0.6 + 0.5 * t, 0.1};
    SignConvention.apply(v, 3, 1);
    assertArrayEquals(new double[] {0.6, -(0.6 + 0.5 * t), -0.1}, v, 0.0);
    // beyond the tolerance v1 leads, and it is already positive
    double[] w = {-0.6, 0.6 + 2 * t, 0.1};
    SignConvention.apply(w, 3, 1);
    assertArrayEquals(new double[] {-0.6, 0.6 + 2 * t, 0.1}, w, 0.0);
    // an exact tie at a later index pair: the lower of the two decides
    double[] x = {0.1, 0.5, -0.5};
    SignConvention.apply(x, 3, 1);
    assertArrayEquals(new double[] {0.1, 0.5, -0.5}, x, 0.0);
    double[] y = {0.1, -0.5, 0.5};
    SignConvention.apply(y, 3, 1);
    assertArrayEquals(new double[] {-0.1, 0.5, -0.5}, y, 0.0);
  }

  /**
   * A chain of near ties: |v2| is the largest, |v1| is within the tolerance of it, |v0| is not (though within the
   * tolerance of |v1|). By the rule, v1 ties with the largest and has the lower index, so v1 decides: the column
   * flips. (A scan that only moves its leader when an entry beats the current leader by more than the tolerance
   * would keep v0 past v1 and then take v2.)
   */
  @Test
  void aChainOfNearTiesIsDecidedAgainstTheLargestEntry() {
    double t = SignConvention.TIE;
    double[] v = {0.5, -(0.5 + 0.8 * t), 0.5 + 1.6 * t};
    assertEquals(1, leader(v, 3, 0));
    SignConvention.apply(v, 3, 1);
    assertArrayEquals(new double[] {-0.5, 0.5 + 0.8 * t, -(0.5 + 1.6 * t)}, v, 0.0);
  }

  @Test
  void applyingTwiceChangesNothing() {
    int d = 7;
    int r = 25;
    double[] v = MathFixtures.gaussian(d, r, 82);
    // plant ties in some columns
    for (int c = 0; c < r; c += 3) {
      v[1 + c * d] = -v[c * d];
    }
    SignConvention.apply(v, d, r);
    double[] once = v.clone();
    SignConvention.apply(v, d, r);
    assertArrayEquals(once, v, 0.0);
  }

  @Test
  void aZeroColumnStaysZeroAndOtherColumnsAreUntouched() {
    double[] v = {0, 0, 0, -1, 0.5, 0.2};
    SignConvention.apply(v, 3, 1);
    assertArrayEquals(new double[] {0, 0, 0, -1, 0.5, 0.2}, v, 0.0, "only the first column is in scope");
    SignConvention.apply(v, 3, 2);
    assertArrayEquals(new double[] {0, 0, 0, 1, -0.5, -0.2}, v, 0.0);
  }

  /**
   * The published loadings satisfy the convention; flipping their columns at random and applying it restores them
   * exactly.
   */
  @Test
  void restoresTheReferenceDatasetsLoadingsFromRandomSigns() {
    Random random = new Random(83);
    for (String name : new String[] {"usarrests", "wine", "longley"}) {
      com.fasterxml.jackson.databind.JsonNode reference = Datasets.reference(name);
      for (String kind : new String[] {"covariance", "correlation"}) {
        double[][] rows = Datasets.matrix(reference.get("pca").get(kind).get("loadings"));
        int r = rows.length;
        int d = rows[0].length;
        double[] expected = new double[d * r];
        double[] flipped = new double[d * r];
        for (int c = 0; c < r; c++) {
          double s = random.nextBoolean() ? -1 : 1;
          for (int j = 0; j < d; j++) {
            expected[j + c * d] = rows[c][j];
            flipped[j + c * d] = s * rows[c][j];
          }
        }
        SignConvention.apply(flipped, d, r);
        assertArrayEquals(expected, flipped, 0.0, name + " " + kind);
      }
    }
  }
}
