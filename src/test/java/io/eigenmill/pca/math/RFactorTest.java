package io.eigenmill.pca.math;

import static io.eigenmill.testing.ErrorBudget.SOLVER;
import static io.eigenmill.testing.ErrorBudget.ULP;
import static io.eigenmill.testing.MathFixtures.gamma;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.BlockSummary;
import io.eigenmill.testing.MathFixtures;
import io.eigenmill.testing.SummaryContract;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.ObjectOutputStream;
import java.io.UncheckedIOException;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * {@link RFactor} (one-pass TSQR of the centred rows) against a brute-force Gram X_c^T X_c of the two-pass centred
 * matrix (EJML 0.43.1 product) and EJML's singular values of X_c, for several shapes of the merge tree, blocks with
 * fewer rows than columns, and empty sides; means and variances against a two-pass computation and exact BigDecimal
 * sums.
 *
 * <p>Tolerance. Each QR step is exact for its input plus a columnwise perturbation ||Delta x_j|| <= gamma~ ||x_j||
 * (Higham 2002, Thm 19.4), and the chain of steps composes into one such perturbation with gamma~ =
 * gamma(4 d (n + steps (d + 1))) (see ErrorBudget.tsqrX; each step also carries the merge row). Centring a block
 * on its computed mean changes each value by at most a few units of rounding of the raw value, and the merge rows
 * sqrt(w) delta carry a relative error of a few u in delta: both are columnwise perturbations bounded by
 * gamma~ ||x_j|| with x_j the raw (uncentred) column, which is what the bounds below use as the scale. Then
 * R^T R differs from X_c^T X_c in entry (a, b) by at most (2 gamma~ + gamma~^2) ||x_a|| ||x_b||. R^T R is read back
 * through the SVD of R (dgesvd, exact for R + E with ||E|| <= SOLVER d ulp sigma_1, so 2 sigma_1 ||E|| + ||E||^2
 * more, and gamma_d sigma_1^2 to form V S^2 V^T), and the EJML product has its own gamma_n ||x_a|| ||x_b|| (Higham
 * 2002, eq. 3.5).
 */
class RFactorTest {
  private static final int N = 1200;
  private static final int D = 15;

  private static double[] data(long seed) {
    double[] x = MathFixtures.gaussian(N, D, seed);
    for (int j = 0; j < D; j++) {
      for (int i = 0; i < N; i++) {
        x[i + j * N] = x[i + j * N] * (1 + j) + 0.5 * j;
      }
    }
    return x;
  }

  /** R^T R read back as V S^2 V^T from {@link RFactor#svd}. */
  private static double[] gramOf(RFactor r) {
    RFactor.Svd svd = r.svd();
    double[] v = svd.rightVectors();
    double[] vs = v.clone();
    for (int j = 0; j < D; j++) {
      double s2 = svd.singularValues()[j] * svd.singularValues()[j];
      for (int i = 0; i < D; i++) {
        vs[i + j * D] *= s2;
      }
    }
    double[] vt = new double[D * D];
    for (int a = 0; a < D; a++) {
      for (int b = 0; b < D; b++) {
        vt[b + a * D] = v[a + b * D];
      }
    }
    return MathFixtures.multiply(vs, vt, D, D, D);
  }

  private static double columnNorm(double[] x, int n, int j) {
    double s = 0;
    for (int i = 0; i < n; i++) {
      s += x[i + j * n] * x[i + j * n];
    }
    return Math.sqrt(s);
  }

  /** The bound of the class comment, for one computation against the brute-force product. */
  private static void assertGramMatches(double[] x, int n, RFactor r, int steps, String what) {
    double[] gram = gramOf(r);
    double[] xc = MathFixtures.centred(x, n, D);
    double[] brute = MathFixtures.multiplyTransA(xc, xc, n, D, D);
    double g = gamma(4.0 * D * (n + (double) steps * (D + 1)));
    double sigma1 = MathFixtures.svd(xc, n, D).values()[0];
    double e = SOLVER * D * ULP * sigma1;
    for (int a = 0; a < D; a++) {
      for (int b = 0; b < D; b++) {
        double scale = columnNorm(x, n, a) * columnNorm(x, n, b);
        double tol = (2 * g + g * g + gamma(n)) * scale + 2 * sigma1 * e + e * e + gamma(D) * sigma1 * sigma1;
        assertEquals(brute[a + b * D], gram[a + b * D], tol, what + ": Gram (" + a + ", " + b + ")");
      }
    }
  }

  /** Weyl for singular values: each side within its backward error of the exact singular values of X_c. */
  private static void assertSingularValuesMatch(double[] x, int n, RFactor r, int steps, String what) {
    MathFixtures.Svd ref = MathFixtures.svd(MathFixtures.centred(x, n, D), n, D);
    double frob = MathFixtures.normF(x);
    double tol = gamma(4.0 * D * (n + (double) steps * (D + 1))) * frob + 2 * SOLVER * D * ULP * ref.values()[0];
    double[] sv = r.svd().singularValues();
    for (int i = 0; i < D; i++) {
      assertEquals(ref.values()[i], sv[i], tol, what + ": singular value " + i);
    }
  }

  /** Means against the two-pass column means (within gamma_n of the largest |x|, the error of a sum of n terms). */
  private static void assertMeansMatch(double[] x, int n, RFactor r, String what) {
    double[] mean = r.mean();
    for (int j = 0; j < D; j++) {
      double biggest = 0;
      for (int i = 0; i < n; i++) {
        biggest = Math.max(biggest, Math.abs(x[i + j * n]));
      }
      assertEquals(MathFixtures.columnMean(x, n, j), mean[j], 2 * gamma(n) * biggest, what + ": mean " + j);
    }
  }

  private static RFactor partition(double[] x, int start, int rows, int blockRows) {
    RFactor r = RFactor.empty(D);
    MathFixtures.feed(MathFixtures.rows(x, N, D, start, rows), rows, D, new int[] {blockRows}, 1, r::addBlock);
    return r;
  }

  private static List<RFactor> partitions(double[] x, int count, int blockRows) {
    List<RFactor> out = new ArrayList<>();
    for (int p = 0; p < count; p++) {
      out.add(partition(x, N * p / count, N * (p + 1) / count - N * p / count, blockRows));
    }
    return out;
  }

  @Test
  void oneSequentialChainMatchesTheBruteForceGramAndEjml() {
    double[] x = data(51);
    RFactor r = partition(x, 0, N, 64);
    assertEquals(N, r.count());
    int steps = N / 64 + 1;
    assertGramMatches(x, N, r, steps, "one chain");
    assertSingularValuesMatch(x, N, r, steps, "one chain");
    assertMeansMatch(x, N, r, "one chain");
  }

  @Test
  void treeShapesAgree() {
    double[] x = data(52);
    int steps = N / 50 + 8;
    // left fold p0 + p1 + ... + p7
    List<RFactor> a = partitions(x, 8, 50);
    RFactor fold = a.get(0);
    for (int p = 1; p < 8; p++) {
      fold.merge(a.get(p));
    }
    // balanced tree ((p0 p1)(p2 p3))((p4 p5)(p6 p7))
    List<RFactor> b = partitions(x, 8, 50);
    RFactor tree = b.get(0).merge(b.get(1)).merge(b.get(2).merge(b.get(3)))
        .merge(b.get(4).merge(b.get(5)).merge(b.get(6).merge(b.get(7))));
    // right fold in reverse order p7 + (p6 + (... + p0))
    List<RFactor> c = partitions(x, 8, 50);
    RFactor reverse = c.get(0);
    for (int p = 1; p < 8; p++) {
      reverse = c.get(p).merge(reverse);
    }
    for (RFactor r : List.of(fold, tree, reverse)) {
      assertEquals(N, r.count());
    }
    assertGramMatches(x, N, fold, steps, "left fold");
    assertGramMatches(x, N, tree, steps, "balanced tree");
    assertGramMatches(x, N, reverse, steps, "reverse fold");
    assertSingularValuesMatch(x, N, fold, steps, "left fold");
    assertSingularValuesMatch(x, N, tree, steps, "balanced tree");
    assertSingularValuesMatch(x, N, reverse, steps, "reverse fold");
    for (RFactor r : List.of(fold, tree, reverse)) {
      assertMeansMatch(x, N, r, "merge tree");
    }
  }

  @Test
  void blocksWithFewerRowsThanColumns() {
    double[] x = data(53);
    RFactor r = partition(x, 0, N, 3);
    assertEquals(N, r.count());
    int steps = N / 3 + 1;
    assertGramMatches(x, N, r, steps, "blocks of 3 rows");
    assertSingularValuesMatch(x, N, r, steps, "blocks of 3 rows");
  }

  @Test
  void fewerRowsInTotalThanColumns() {
    int n = 6;
    double[] x = MathFixtures.rows(data(54), N, D, 0, n);
    RFactor r = RFactor.empty(D);
    MathFixtures.feed(x, n, D, new int[] {4}, 0, r::addBlock);
    assertEquals(n, r.count());
    assertGramMatches(x, n, r, 3, "6 rows");
    double[] sv = r.svd().singularValues();
    // centred, 6 rows have rank at most 5: the remaining singular values are rounding, at most the backward error
    // of the QR and SVD
    double tol = gamma(4.0 * D * (n + 3.0 * (D + 1))) * MathFixtures.normF(x) + SOLVER * D * ULP * sv[0];
    for (int i = n - 1; i < D; i++) {
      assertTrue(sv[i] <= tol, "singular value " + i + " = " + sv[i] + " should vanish (bound " + tol + ")");
    }
  }

  /**
   * Offset 1e9 and standard deviations 1e-3..4e-3 (as in MomentsTest), blocks of 64 rows in two merged partitions:
   * the variances from R (squared column norms over n - 1) within 1e-6 relative of the exact ones (BigDecimal sums,
   * MathFixtures.exactCovariance; the brief's requirement), and the singular values within the same relative error
   * of EJML's singular values of the exactly centred matrix (each centred value computed in BigDecimal, then rounded
   * once). A QR of the raw columns would be exact only for a perturbation of size u 1e9 sqrt(n), 10^-4 of the
   * centred norm.
   */
  @Test
  void offsetDataKeepVariancesAndSingularValues() {
    int n = 3000;
    int d = 4;
    java.util.Random random = new java.util.Random(23);
    double[] x = new double[n * d];
    for (int j = 0; j < d; j++) {
      for (int i = 0; i < n; i++) {
        x[i + j * n] = 1e9 + 1e-3 * (1 + j) * random.nextGaussian();
      }
    }
    double[] exact = MathFixtures.exactCovariance(x, n, d);
    RFactor left = RFactor.empty(d);
    RFactor right = RFactor.empty(d);
    MathFixtures.feed(MathFixtures.rows(x, n, d, 0, 1234), 1234, d, new int[] {64}, 1, left::addBlock);
    MathFixtures.feed(MathFixtures.rows(x, n, d, 1234, n - 1234), n - 1234, d, new int[] {64}, 1, right::addBlock);
    RFactor r = left.merge(right);
    double[] v = r.variances();
    for (int j = 0; j < d; j++) {
      double truth = exact[j + j * d];
      assertTrue(Math.abs(v[j] - truth) / truth < 1e-6, "variance " + j + ": " + v[j] + " against " + truth);
    }
    double[] xc = new double[n * d];
    for (int j = 0; j < d; j++) {
      java.math.BigDecimal sum = java.math.BigDecimal.ZERO;
      for (int i = 0; i < n; i++) {
        sum = sum.add(new java.math.BigDecimal(x[i + j * n]));
      }
      java.math.BigDecimal mean = sum.divide(java.math.BigDecimal.valueOf(n), java.math.MathContext.DECIMAL128);
      for (int i = 0; i < n; i++) {
        xc[i + j * n] = new java.math.BigDecimal(x[i + j * n]).subtract(mean).doubleValue();
      }
    }
    double[] ref = MathFixtures.svd(xc, n, d).values();
    double[] sv = r.svd().singularValues();
    for (int i = 0; i < d; i++) {
      assertTrue(Math.abs(sv[i] - ref[i]) / ref[i] < 1e-6, "singular value " + i + ": " + sv[i] + " against "
          + ref[i]);
    }
    assertArrayEquals(new double[] {1e9, 1e9, 1e9, 1e9}, r.mean(), 1e-3, "means stay at the offset");
  }

  /**
   * The state of an RFactor (count and R) through its Java serialization, the form Spark ships it in: compared
   * byte for byte where the state must not change. (Its SVD is not: LAPACK through a native BLAS may round
   * differently from one call to the next on the same input, as array alignment changes the kernels' paths.)
   */
  private static byte[] state(RFactor r) {
    try (ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        ObjectOutputStream out = new ObjectOutputStream(bytes)) {
      out.writeObject(r);
      out.flush();
      return bytes.toByteArray();
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  @Test
  void mergingWithAnEmptySideIsTheIdentity() {
    double[] x = data(55);
    RFactor r = partition(x, 0, 300, 64);
    byte[] before = state(r);
    RFactor same = r.merge(RFactor.empty(D));
    assertEquals(300, same.count());
    assertArrayEquals(before, state(same), "r merge empty changed R");
    // empty.merge(r) takes r's state as it is (no QR step): bit for bit, and so the same R^T R
    RFactor fromEmpty = RFactor.empty(D).merge(r);
    assertEquals(300, fromEmpty.count());
    assertArrayEquals(before, state(fromEmpty), "empty merge r is not r");
    assertGramMatches(MathFixtures.rows(x, N, D, 0, 300), 300, fromEmpty, 300 / 64 + 3, "empty merge r");
    RFactor zero = RFactor.empty(D).merge(RFactor.empty(D));
    assertEquals(0, zero.count());
    assertArrayEquals(state(RFactor.empty(D)), state(zero));
    assertArrayEquals(new double[D], zero.svd().singularValues(), 0.0);
  }

  /**
   * The {@link BlockSummary} contract through the interface (testing.SummaryContract): empty is the identity bit for
   * bit on either side; the halves' R factors merged match the brute-force Gram and EJML's singular values of all
   * the rows within the bounds of the class comment (steps: the blocks of both halves plus the merge), the means the
   * two-pass means.
   */
  @Test
  void asABlockSummaryEmptyIsTheIdentityAndMergedHalvesMatchTheBruteForceGram() {
    double[] x = data(57);
    BlockSummary.Factory<RFactor> factory = RFactor.factory(D);
    RFactor halves = SummaryContract.mergedHalves(factory, x, N, D, 517, new int[] {64, 1, 100});
    SummaryContract.assertEmptyIsTheIdentity(factory, halves);
    assertEquals(N, halves.count());
    int steps = 3 * (N / (64 + 1 + 100) + 2) + 1;
    assertGramMatches(x, N, halves, steps, "merged halves");
    assertSingularValuesMatch(x, N, halves, steps, "merged halves");
    assertMeansMatch(x, N, halves, "merged halves");
  }

  @Test
  void emptyBlocksChangeNothingAndMergeLeavesTheOtherSideAlone() {
    double[] x = data(56);
    RFactor a = partition(x, 0, 200, 64);
    RFactor b = partition(x, 200, 200, 64);
    byte[] aBefore = state(a);
    byte[] bBefore = state(b);
    a.addBlock(new double[D], 0, 1);
    assertArrayEquals(aBefore, state(a), "an empty block changed R");
    a.merge(b);
    assertArrayEquals(bBefore, state(b), "merge changed the other side");
    assertEquals(400, a.count());
    assertGramMatches(MathFixtures.rows(x, N, D, 0, 400), 400, a, 400 / 64 + 3, "a merge b");
  }

  @Test
  void mismatchedWidthsAreRefused() {
    assertThrows(IllegalArgumentException.class, () -> RFactor.empty(3).merge(RFactor.empty(4)));
  }
}
