package io.eigenmill.math;

import static io.eigenmill.testing.MathFixtures.U;
import static io.eigenmill.testing.MathFixtures.gamma;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.testing.MathFixtures;
import io.eigenmill.testing.SummaryContract;
import java.util.Random;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.junit.jupiter.api.Test;

/**
 * {@link Moments} against references outside the package: Apache Commons Math 3.6.1 {@code Covariance} (a two-pass
 * computation: the column means first, then a running average of the centred products, times n / (n - 1), as its
 * bytecode in the 3.6.1 jar shows), a two-pass loop and exact {@code BigDecimal} sums (MathFixtures.exactCovariance), and
 * EJML 0.43.1's symmetric eigen-decomposition.
 *
 * <p>Tolerances. For entry (a, b) of the co-moment matrix M = sum (x - mean)(x - mean)^T, a sum of n centred products
 * computed in floating point is off by at most gamma_n sum |c_a c_b| <= gamma_n sqrt(M_aa M_bb) (Higham 2002,
 * Accuracy and Stability of Numerical Algorithms, eq. 3.5, with Cauchy-Schwarz); rounding the mean shifts every
 * centred value by up to 2u |x|, which adds at most 2u kappa sqrt(M_aa M_bb) with kappa = sqrt(1 + n mean^2 / M) the
 * condition number of the variance (Chan, Golub and LeVeque 1983, The American Statistician 37:242-247). Both the
 * code and the reference carry such an error, hence {@link #comomentTolerance}.
 */
class MomentsTest {
  private static final int N = 2000;
  private static final int D = 9;

  /** Seeded data with unequal means (0 to 40) and spreads (0.1 to 20) and correlated columns. */
  private static double[] data(int n, int d, long seed) {
    double[] g = MathFixtures.gaussian(n, d, seed);
    double[] x = new double[n * d];
    for (int j = 0; j < d; j++) {
      double scale = 0.1 + 20.0 * j / d;
      double offset = 5.0 * j;
      for (int i = 0; i < n; i++) {
        double mixed = g[i + j * n] + (j > 0 ? 0.6 * g[i + (j - 1) * n] : 0.0);
        x[i + j * n] = offset + scale * mixed;
      }
    }
    return x;
  }

  /** The reference: Commons Math 3.6.1 {@code Covariance} with the n - 1 denominator, as a column-major array. */
  private static double[] commonsCovariance(double[] x, int n, int d) {
    double[][] rows = new double[n][d];
    for (int i = 0; i < n; i++) {
      for (int j = 0; j < d; j++) {
        rows[i][j] = x[i + j * n];
      }
    }
    double[][] c = new Covariance(rows, true).getCovarianceMatrix().getData();
    double[] out = new double[d * d];
    for (int a = 0; a < d; a++) {
      for (int b = 0; b < d; b++) {
        out[a + b * d] = c[a][b];
      }
    }
    return out;
  }

  private static double maxAbs(double[] x, int n, int j) {
    double m = 0;
    for (int i = 0; i < n; i++) {
      m = Math.max(m, Math.abs(x[i + j * n]));
    }
    return m;
  }

  /**
   * Bound on |C_ab(code) - C_ab(reference)| for two computations of the sample covariance of x, each within
   * (gamma_n + 2u (kappa_a + kappa_b)) sqrt(C_aa C_bb) (class comment); doubled for the two sides and once more for
   * the division by n - 1 and the pairwise merges, which add a few roundings per term on top of the n of the sum.
   */
  private static double comomentTolerance(double[] cov, double[] means, int n, int d, int a, int b) {
    double kappaA = Math.sqrt(1 + n * means[a] * means[a] / ((n - 1) * cov[a + a * d]));
    double kappaB = Math.sqrt(1 + n * means[b] * means[b] / ((n - 1) * cov[b + b * d]));
    return 4 * (gamma(n) + 2 * U * (kappaA + kappaB)) * Math.sqrt(cov[a + a * d] * cov[b + b * d]);
  }

  private static void assertCovarianceClose(double[] expected, double[] actual, double[] means, int n, int d) {
    for (int a = 0; a < d; a++) {
      for (int b = 0; b < d; b++) {
        double tol = comomentTolerance(expected, means, n, d, a, b);
        double err = Math.abs(expected[a + b * d] - actual[a + b * d]);
        assertTrue(err <= tol, "covariance (" + a + ", " + b + "): " + actual[a + b * d] + " vs reference "
            + expected[a + b * d] + ", error " + err + " > bound " + tol);
      }
    }
  }

  /** Mean of column j: recursive summation is within gamma_n max|x| of the exact mean (Higham 2002, eq. 4.4). */
  private static void assertMeansClose(double[] x, int n, int d, double[] actual) {
    for (int j = 0; j < d; j++) {
      double expected = MathFixtures.columnMean(x, n, j);
      double tol = 4 * gamma(n) * maxAbs(x, n, j);
      assertEquals(expected, actual[j], tol, "mean of column " + j);
    }
  }

  /**
   * Adds blocks to {@code m} the way the columnar reader does when the moments name an origin: the first block as
   * read, each later one with {@link Moments#nextOrigin} subtracted from its rows (the same subtraction, x - o, that
   * the copy makes) and a column of ones after them, through {@link Moments#addShiftedBlock}.
   */
  static MathFixtures.BlockSink shifted(Moments m) {
    return (block, rows, ld) -> {
      double[] origin = m.nextOrigin();
      if (origin == null) {
        m.addBlock(block, rows, ld);
        return;
      }
      int d = origin.length;
      double[] withOnes = java.util.Arrays.copyOf(block, (d + 1) * ld);
      for (int j = 0; j < d; j++) {
        for (int i = 0; i < rows; i++) {
          withOnes[j * ld + i] -= origin[j];
        }
      }
      java.util.Arrays.fill(withOnes, d * ld, d * ld + rows, 1.0);
      java.util.Arrays.fill(withOnes, d * ld + rows, (d + 1) * ld, Double.NaN);
      m.addShiftedBlock(withOnes, rows, ld, origin);
    };
  }

  @Test
  void shiftedBlocksMatchCommonsMathTwoPassCovariance() {
    double[] x = data(N, D, 11);
    for (int[] sizes : new int[][] {{137, 1, 64, 500, 1, 2}, {1}, {16}, {N}}) {
      Moments m = Moments.empty(D, true);
      MathFixtures.feed(x, N, D, sizes, 3, shifted(m));
      assertEquals(N, m.count());
      assertMeansClose(x, N, D, m.mean());
      assertCovarianceClose(commonsCovariance(x, N, D), m.covariance(), m.mean(), N, D);
    }
  }

  /**
   * Summaries share their thread's Gram of a shifted block while it has at most {@link Moments#SHARED_GRAM_ORDER}
   * columns (d + 1: here d = D shares, d = 512 keeps its own): fed block by block in turn on one thread, or at once on
   * two threads, each must hold the bits it holds when fed alone. The reference is the same computation fed alone, so
   * the check is exact; the sums themselves are checked against Commons Math above.
   */
  @Test
  void summariesFedInTurnOrOnTwoThreadsEqualEachFedAloneBitForBit() throws Exception {
    for (int d : new int[] {D, Moments.SHARED_GRAM_ORDER}) {
      int n = 600;
      int[] sizes = {100, 100, 100, 100, 100, 100};
      double[][] xs = {data(n, d, 21), data(n, d, 22)};
      Moments[] alone = {Moments.empty(d, true), Moments.empty(d, true)};
      for (int s = 0; s < 2; s++) {
        MathFixtures.feed(xs[s], n, d, sizes, 0, shifted(alone[s]));
      }
      // in turn on this thread: block 1 of the first, block 1 of the second, block 2 of the first, ...
      Moments[] turns = {Moments.empty(d, true), Moments.empty(d, true)};
      for (int b = 0; b < sizes.length; b++) {
        for (int s = 0; s < 2; s++) {
          double[] block = MathFixtures.block(xs[s], n, d, 100 * b, 100, 100);
          shifted(turns[s]).add(block, 100, 100);
        }
      }
      // on two threads at once, in blocks of 3 rows: 200 calls each, so that the calls of the two overlap
      int[] small = new int[200];
      java.util.Arrays.fill(small, 3);
      Moments[] smallAlone = {Moments.empty(d, true), Moments.empty(d, true)};
      for (int s = 0; s < 2; s++) {
        MathFixtures.feed(xs[s], n, d, small, 0, shifted(smallAlone[s]));
      }
      Moments[] threads = {Moments.empty(d, true), Moments.empty(d, true)};
      Thread[] workers = new Thread[2];
      for (int s = 0; s < 2; s++) {
        int which = s;
        workers[s] = new Thread(() -> MathFixtures.feed(xs[which], n, d, small, 0, shifted(threads[which])));
        workers[s].start();
      }
      for (Thread w : workers) {
        w.join();
      }
      for (int s = 0; s < 2; s++) {
        assertArrayEquals(alone[s].covariance(), turns[s].covariance(), 0.0, "d = " + d + ", summary " + s
            + " fed in turn");
        assertArrayEquals(alone[s].mean(), turns[s].mean(), 0.0, "d = " + d + ", mean " + s + " fed in turn");
        assertArrayEquals(smallAlone[s].covariance(), threads[s].covariance(), 0.0, "d = " + d + ", summary " + s
            + " fed on its own thread");
      }
      assertTrue(alone[0].covariance()[0] != alone[1].covariance()[0], "the two tables differ");
    }
  }

  @Test
  void theOriginOfferedIsTheLastBlocksMeanAndStaysAsGiven() {
    double[] x = data(N, D, 14);
    Moments m = Moments.empty(D, true);
    assertEquals(null, m.nextOrigin(), "no origin before the first block");
    MathFixtures.feed(MathFixtures.rows(x, N, D, 0, 300), 300, D, new int[] {300}, 0, m::addBlock);
    double[] first = m.nextOrigin();
    double[] kept = first.clone();
    for (int j = 0; j < D; j++) {
      // the first 300 rows of the N-row matrix are the block; its mean within gamma_300 max|x| (Higham 2002, eq. 4.4)
      double expected = 0;
      for (int i = 0; i < 300; i++) {
        expected += x[i + j * N];
      }
      expected /= 300;
      assertEquals(expected, first[j], 4 * gamma(300) * maxAbs(x, N, j), "origin of column " + j);
    }
    double[] next = MathFixtures.block(x, N, D, 300, 200, 200);
    for (int j = 0; j < D; j++) {
      for (int i = 0; i < 200; i++) {
        next[j * 200 + i] -= first[j];
      }
    }
    next = java.util.Arrays.copyOf(next, (D + 1) * 200);
    java.util.Arrays.fill(next, D * 200, (D + 1) * 200, 1.0);
    m.addShiftedBlock(next, 200, 200, first);
    assertArrayEquals(kept, first, 0.0, "the origin handed out is not changed by the block it shifted");
    assertTrue(m.nextOrigin() != first, "a new array for the next block");
    double[] noOnes = java.util.Arrays.copyOf(MathFixtures.block(x, N, D, 500, 10, 10), (D + 1) * 10);
    double[] origin = m.nextOrigin();
    IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
        () -> m.addShiftedBlock(noOnes.clone(), 10, 10, origin));
    assertEquals("column 9 of a shifted block of 10 rows must hold ones; its squares sum to 0.0", e.getMessage());
  }

  /**
   * Blocks whose means jump by up to nine orders of magnitude from one block to the next (levels 1e9, 0, 1e9 + 5,
   * -3e6 in turn; spread 1e-3 to 10), fed with shifts: a value x - o with o the previous block's mean is then rounded
   * by up to u |x - o|. Moments.nextOrigin's comment bounds what that costs by about eps times the total co-moment;
   * asserted against the exact covariance (BigDecimal) with the class's bound plus 8u sqrt(C_aa C_bb) per jump
   * counted once per block pair (a factor 2 margin on the 4u of the comment's bound, sum of q over two blocks).
   */
  @Test
  void shiftsAcrossJumpingBlockMeansStayWithinEpsOfTheTotal() {
    int blockRows = 50;
    int blocks = 24;
    int n = blockRows * blocks;
    int d = 3;
    double[] levels = {1e9, 0, 1e9 + 5, -3e6};
    Random random = new Random(31);
    double[] x = new double[n * d];
    for (int b = 0; b < blocks; b++) {
      for (int i = b * blockRows; i < (b + 1) * blockRows; i++) {
        double g = random.nextGaussian();
        x[i] = levels[b % 4] + 1e-3 * g;
        x[i + n] = levels[(b + 1) % 4] * 1e-3 + 10 * random.nextGaussian();
        x[i + 2 * n] = 2.5 * g + random.nextGaussian();
      }
    }
    double[] exact = MathFixtures.exactCovariance(x, n, d);
    for (boolean gram : new boolean[] {true, false}) {
      Moments m = Moments.empty(d, gram);
      MathFixtures.feed(x, n, d, new int[] {blockRows}, 1, shifted(m));
      double[] v = m.variances();
      for (int a = 0; a < d; a++) {
        double truth = exact[a + a * d];
        double tol = (gamma(n + 8 * blocks) + 8 * U * blocks) * truth;
        assertEquals(truth, v[a], tol, "variance of column " + a + ", gram " + gram);
      }
      if (gram) {
        double[] c = m.covariance();
        for (int a = 0; a < d; a++) {
          for (int b = 0; b < d; b++) {
            double scale = Math.sqrt(exact[a + a * d] * exact[b + b * d]);
            double tol = (gamma(n + 8 * blocks) + 8 * U * blocks) * scale;
            assertEquals(exact[a + b * d], c[a + b * d], tol, "covariance (" + a + ", " + b + ")");
          }
        }
      }
    }
  }

  @Test
  void blockUpdatesMatchCommonsMathTwoPassCovariance() {
    double[] x = data(N, D, 11);
    Moments m = Moments.empty(D, true);
    // unequal blocks, including single rows, with leading dimension rows + 3 and NaN in the padding
    MathFixtures.feed(x, N, D, new int[] {137, 1, 64, 500, 1, 2}, 3, m::addBlock);
    assertEquals(N, m.count());
    assertMeansClose(x, N, D, m.mean());
    double[] reference = commonsCovariance(x, N, D);
    assertCovarianceClose(reference, m.covariance(), m.mean(), N, D);
    double[] variances = m.variances();
    for (int j = 0; j < D; j++) {
      assertEquals(reference[j + j * D], variances[j], comomentTolerance(reference, m.mean(), N, D, j, j),
          "variance of column " + j);
    }
  }

  @Test
  void singleRowBlocksMatchTheTestsOwnTwoPassCovariance() {
    int n = 300;
    double[] x = data(n, D, 12);
    Moments m = Moments.empty(D, true);
    MathFixtures.feed(x, n, D, new int[] {1}, 0, m::addBlock);
    assertEquals(n, m.count());
    assertMeansClose(x, n, D, m.mean());
    assertCovarianceClose(MathFixtures.twoPassCovariance(x, n, D), m.covariance(), m.mean(), n, D);
  }

  @Test
  void oneBlockAndManyBlocksAgreeWithinTheBound() {
    double[] x = data(N, D, 13);
    Moments one = Moments.empty(D, true);
    MathFixtures.feed(x, N, D, new int[] {N}, 0, one::addBlock);
    Moments many = Moments.empty(D, true);
    MathFixtures.feed(x, N, D, new int[] {7}, 5, many::addBlock);
    assertCovarianceClose(one.covariance(), many.covariance(), one.mean(), N, D);
    assertCovarianceClose(commonsCovariance(x, N, D), one.covariance(), one.mean(), N, D);
  }

  @Test
  void addBlockCentresOnlyTheRowsOfTheBlockAndLeavesThePaddingAlone() {
    int rows = 40;
    int ld = 47;
    double[] x = data(rows, D, 14);
    double[] block = MathFixtures.block(x, rows, D, 0, rows, ld);
    Moments.empty(D, false).addBlock(block, rows, ld);
    for (int j = 0; j < D; j++) {
      double sum = 0;
      double abs = 0;
      for (int i = 0; i < rows; i++) {
        sum += block[i + j * ld];
        abs += Math.abs(x[i + j * rows]);
      }
      // the centred column sums to zero up to the rounding of the mean and of the sum: gamma_rows sum|x| each
      assertEquals(0.0, sum, 4 * gamma(rows) * abs, "centred column " + j);
      for (int i = rows; i < ld; i++) {
        assertTrue(Double.isNaN(block[i + j * ld]), "padding row " + i + " of column " + j + " was written");
      }
    }
  }

  /**
   * Merging is associative and commutative within rounding. Each merge adds delta delta^T na nb / n and two partial
   * co-moments; every one of these terms is positive semi-definite, so the sum of their absolute (a, b) entries is at
   * most sqrt(M_aa M_bb) (Cauchy-Schwarz), and each grouping's two merges round at most 3 times per term: 6u per
   * grouping, 12u for the difference of two groupings. The means enter delta with an error of at most 2u max|x|
   * each; over merges with weights summing to at most n this adds 2u sqrt(n) (sqrt(M_aa) max|x_b| + sqrt(M_bb)
   * max|x_a|) per grouping.
   */
  private static double mergeTolerance(Moments m, double[] x, int n, int d, int a, int b) {
    double[] cov = m.covariance();
    double scale = n - 1.0;
    double maa = cov[a + a * d] * scale;
    double mbb = cov[b + b * d] * scale;
    double coMomentTol = 12 * U * Math.sqrt(maa * mbb)
        + 4 * U * Math.sqrt(n) * (Math.sqrt(maa) * maxAbs(x, n, b) + Math.sqrt(mbb) * maxAbs(x, n, a));
    return 2 * coMomentTol / scale;
  }

  private static Moments momentsOfRows(double[] x, int n, int d, int start, int rows, boolean gram) {
    Moments m = Moments.empty(d, gram);
    m.addBlock(MathFixtures.rows(x, n, d, start, rows), rows, rows);
    return m;
  }

  private static void assertMergesAgree(Moments expected, Moments actual, double[] x, int n, int d) {
    assertEquals(expected.count(), actual.count());
    double[] me = expected.mean();
    double[] ma = actual.mean();
    for (int j = 0; j < d; j++) {
      // two merges per grouping, each rounding the mean at most 3 times relative to max|x|
      assertEquals(me[j], ma[j], 12 * U * maxAbs(x, n, j), "mean " + j);
    }
    double[] ce = expected.covariance();
    double[] ca = actual.covariance();
    for (int a = 0; a < d; a++) {
      for (int b = 0; b < d; b++) {
        double tol = mergeTolerance(expected, x, n, d, a, b);
        assertEquals(ce[a + b * d], ca[a + b * d], tol, "covariance (" + a + ", " + b + ")");
      }
    }
  }

  /**
   * The {@link BlockSummary} contract through the interface (testing.SummaryContract), with the Gram and without:
   * empty is the identity bit for bit on either side; the halves' summaries merged match Commons Math's
   * {@code Covariance} of all the rows within {@link #comomentTolerance} (its factor 4 covers the merge's few
   * roundings per term on top of the n of the sums), the means within the bound of {@link #assertMeansClose}.
   */
  @Test
  void asABlockSummaryEmptyIsTheIdentityAndMergedHalvesMatchCommonsMath() {
    int n = 1000;
    double[] x = data(n, D, 19);
    double[] reference = commonsCovariance(x, n, D);
    for (boolean gram : new boolean[] {true, false}) {
      BlockSummary.Factory<Moments> factory = Moments.factory(D, gram);
      Moments halves = SummaryContract.mergedHalves(factory, x, n, D, 433, new int[] {128, 1, 37});
      SummaryContract.assertEmptyIsTheIdentity(factory, halves);
      assertEquals(n, halves.count());
      assertMeansClose(x, n, D, halves.mean());
      if (gram) {
        assertCovarianceClose(reference, halves.covariance(), halves.mean(), n, D);
      }
      double[] variances = halves.variances();
      for (int j = 0; j < D; j++) {
        assertEquals(reference[j + j * D], variances[j], comomentTolerance(reference, halves.mean(), n, D, j, j),
            "variance of column " + j + ", gram " + gram);
      }
    }
  }

  @Test
  void mergeIsAssociativeWithinRounding() {
    int n = 900;
    double[] x = data(n, D, 15);
    Moments left = momentsOfRows(x, n, D, 0, 200, true)
        .merge(momentsOfRows(x, n, D, 200, 300, true))
        .merge(momentsOfRows(x, n, D, 500, 400, true));
    Moments right = momentsOfRows(x, n, D, 0, 200, true)
        .merge(momentsOfRows(x, n, D, 200, 300, true).merge(momentsOfRows(x, n, D, 500, 400, true)));
    assertMergesAgree(left, right, x, n, D);
    assertCovarianceClose(commonsCovariance(x, n, D), left.covariance(), left.mean(), n, D);
  }

  @Test
  void mergeIsCommutativeWithinRounding() {
    int n = 700;
    double[] x = data(n, D, 16);
    Moments ab = momentsOfRows(x, n, D, 0, 123, true).merge(momentsOfRows(x, n, D, 123, 577, true));
    Moments ba = momentsOfRows(x, n, D, 123, 577, true).merge(momentsOfRows(x, n, D, 0, 123, true));
    assertMergesAgree(ab, ba, x, n, D);
  }

  @Test
  void mergeLeavesTheOtherSideUnchanged() {
    int n = 100;
    double[] x = data(n, D, 17);
    Moments a = momentsOfRows(x, n, D, 0, 50, true);
    Moments b = momentsOfRows(x, n, D, 50, 50, true);
    byte[] before = b.toBytes();
    a.merge(b);
    assertArrayEquals(before, b.toBytes());
  }

  @Test
  void mergingWithAnEmptySideIsTheIdentity() {
    int n = 120;
    double[] x = data(n, D, 18);
    for (boolean gram : new boolean[] {true, false}) {
      Moments a = momentsOfRows(x, n, D, 0, n, gram);
      byte[] expected = a.toBytes();
      assertArrayEquals(expected, a.merge(Moments.empty(D, gram)).toBytes(), "a merge empty, gram " + gram);
      assertArrayEquals(expected, Moments.empty(D, gram).merge(a).toBytes(), "empty merge a, gram " + gram);
      Moments zero = Moments.empty(D, gram).merge(Moments.empty(D, gram));
      assertEquals(0, zero.count());
      assertArrayEquals(Moments.empty(D, gram).toBytes(), zero.toBytes());
    }
  }

  @Test
  void emptyBlocksChangeNothing() {
    Moments m = momentsOfRows(data(10, D, 19), 10, D, 0, 10, true);
    byte[] before = m.toBytes();
    m.addBlock(new double[D], 0, 1);
    assertArrayEquals(before, m.toBytes());
  }

  @Test
  void bytesRoundTripExactlyAndTheCopyContinuesLikeTheOriginal() {
    int n = 400;
    double[] x = data(n, D, 20);
    for (boolean gram : new boolean[] {true, false}) {
      Moments original = Moments.empty(D, gram);
      MathFixtures.feed(MathFixtures.rows(x, n, D, 0, 250), 250, D, new int[] {33}, 2, original::addBlock);
      byte[] bytes = original.toBytes();
      Moments copy = Moments.fromBytes(bytes);
      assertArrayEquals(bytes, copy.toBytes());
      assertEquals(original.count(), copy.count());
      assertEquals(gram, copy.hasGram());
      assertEquals(D, copy.dimension());
      assertArrayEquals(original.mean(), copy.mean(), 0.0);
      assertArrayEquals(original.variances(), copy.variances(), 0.0);
      // the restored copy continues like the original: count and means (plain Java arithmetic) bit for bit; the
      // co-moments through BLAS, whose level-2 kernels may round differently on differently aligned arrays, within
      // the bound against the reference
      double[] rest = MathFixtures.rows(x, n, D, 250, 150);
      original.addBlock(rest.clone(), 150, 150);
      copy.addBlock(rest.clone(), 150, 150);
      assertEquals(original.count(), copy.count());
      assertArrayEquals(original.mean(), copy.mean(), 0.0);
      double[] reference = commonsCovariance(x, n, D);
      if (gram) {
        assertCovarianceClose(reference, copy.covariance(), copy.mean(), n, D);
      }
      for (int j = 0; j < D; j++) {
        assertEquals(reference[j + j * D], copy.variances()[j], comomentTolerance(reference, copy.mean(), n, D, j, j));
      }
    }
  }

  /** Java serialization, the form partial results travel in between Spark tasks, keeps the state exactly. */
  @Test
  void javaSerializationKeepsTheStateAndTheCopyKeepsWorking() throws Exception {
    int n = 300;
    double[] x = data(n, D, 24);
    Moments original = momentsOfRows(x, n, D, 0, 200, true);
    java.io.ByteArrayOutputStream bytes = new java.io.ByteArrayOutputStream();
    try (java.io.ObjectOutputStream out = new java.io.ObjectOutputStream(bytes)) {
      out.writeObject(original);
    }
    Moments copy;
    try (java.io.ObjectInputStream in = new java.io.ObjectInputStream(
        new java.io.ByteArrayInputStream(bytes.toByteArray()))) {
      copy = (Moments) in.readObject();
    }
    assertArrayEquals(original.toBytes(), copy.toBytes());
    // its scratch arrays are transient: the copy must rebuild them on its next block
    copy.addBlock(MathFixtures.rows(x, n, D, 200, 100), 100, 100);
    assertEquals(n, copy.count());
    assertCovarianceClose(commonsCovariance(x, n, D), copy.covariance(), copy.mean(), n, D);
  }

  /**
   * Serialized, moments with the Gram keep only the upper triangle: at d = 100 about half the 80,000 bytes of the
   * d x d array (the packed triangle is 5,050 doubles, 40,400 bytes, plus the means and a header).
   */
  @Test
  void serializedMomentsKeepTheUpperTriangleOnly() throws Exception {
    int d = 100;
    Moments m = Moments.empty(d, true);
    double[] block = new double[50 * d];
    java.util.SplittableRandom r = new java.util.SplittableRandom(3);
    for (int i = 0; i < block.length; i++) {
      block[i] = r.nextGaussian();
    }
    m.addBlock(block, 50, 50);
    java.io.ByteArrayOutputStream bytes = new java.io.ByteArrayOutputStream();
    try (java.io.ObjectOutputStream out = new java.io.ObjectOutputStream(bytes)) {
      out.writeObject(m);
    }
    assertTrue(bytes.size() < 44_000, "serialized size " + bytes.size());
    try (java.io.ObjectInputStream in = new java.io.ObjectInputStream(
        new java.io.ByteArrayInputStream(bytes.toByteArray()))) {
      assertArrayEquals(m.toBytes(), ((Moments) in.readObject()).toBytes());
    }
  }

  /**
   * The diagonal-only mode follows the same code path for count and means (equal bit for bit) and sums the same
   * squares in another order (dsyrk versus a loop): sums of non-negative terms, so the two differ by at most
   * 2 gamma_n times the value.
   */
  @Test
  void diagonalModeEqualsTheDiagonalOfTheFullMode() {
    double[] x = data(N, D, 21);
    Moments full = Moments.empty(D, true);
    Moments diagonal = Moments.empty(D, false);
    MathFixtures.feed(x, N, D, new int[] {250, 3}, 1, full::addBlock);
    MathFixtures.feed(x, N, D, new int[] {250, 3}, 1, diagonal::addBlock);
    assertEquals(full.count(), diagonal.count());
    assertArrayEquals(full.mean(), diagonal.mean(), 0.0);
    double[] vf = full.variances();
    double[] vd = diagonal.variances();
    double[] cov = full.covariance();
    for (int j = 0; j < D; j++) {
      assertEquals(cov[j + j * D], vf[j], 0.0, "variances() is the diagonal of covariance()");
      assertEquals(vf[j], vd[j], 2 * gamma(N) * vf[j], "variance " + j);
    }
    assertThrows(IllegalStateException.class, diagonal::covariance);
  }

  @Test
  void mismatchedShapesAreRefused() {
    assertThrows(IllegalArgumentException.class, () -> Moments.empty(3, true).merge(Moments.empty(4, true)));
    assertThrows(IllegalArgumentException.class, () -> Moments.empty(3, true).merge(Moments.empty(3, false)));
  }

  @Test
  void fewerThanTwoRowsGiveZeroVariances() {
    Moments m = momentsOfRows(data(1, D, 22), 1, D, 0, 1, false);
    assertArrayEquals(new double[D], m.variances(), 0.0);
  }

  // ---------------------------------------------------------------------------------------------------------------
  // Stability: offset 1e9, standard deviation 1e-3

  private static final int STABLE_N = 3000;
  private static final int STABLE_D = 4;
  private static final double OFFSET = 1e9;

  private static double[] offsetData() {
    Random random = new Random(23);
    double[] x = new double[STABLE_N * STABLE_D];
    for (int j = 0; j < STABLE_D; j++) {
      double sd = 1e-3 * (1 + j);
      for (int i = 0; i < STABLE_N; i++) {
        x[i + j * STABLE_N] = OFFSET + sd * random.nextGaussian();
      }
    }
    return x;
  }

  /**
   * Blocks in several shapes (single rows, small, uneven, one block) and, for each, a merge of partitions. Each
   * block is centred on its computed mean, a double near 1e9, and 1e9 +/- 1 minus that double is exact (Sterbenz's
   * lemma, Higham 2002 Thm 2.5); the mean of the centred values (what the rounding of the block's sum left over)
   * corrects the Gram and the block's mean; the brief's requirement is a relative error below
   * 1e-6, and what is left after exact centring is a sum of n non-negative products and of the merge terms, whose
   * relative error is at most gamma_{n + 8 blocks} (Higham 2002, §4.2) when the block means enter the merge without
   * loss: we assert that sharper bound too.
   */
  @Test
  void offsetDataKeepsVariancesToRelativeAccuracy() {
    double[] x = offsetData();
    double[] exact = MathFixtures.exactCovariance(x, STABLE_N, STABLE_D);
    for (int[] sizes : new int[][] {{1}, {10}, {64}, {17, 1, 250}, {STABLE_N}}) {
      for (int variant = 0; variant < 4; variant++) {
        // gram or diagonal only; blocks as read or shifted by the previous block's mean (the columnar reader's way)
        boolean gram = variant % 2 == 0;
        boolean shift = variant >= 2;
        Moments left = Moments.empty(STABLE_D, gram);
        Moments right = Moments.empty(STABLE_D, gram);
        int half = 1234;
        MathFixtures.feed(MathFixtures.rows(x, STABLE_N, STABLE_D, 0, half), half, STABLE_D, sizes, 1,
            shift ? shifted(left) : left::addBlock);
        int rest = STABLE_N - half;
        MathFixtures.feed(MathFixtures.rows(x, STABLE_N, STABLE_D, half, rest), rest, STABLE_D, sizes, 1,
            shift ? shifted(right) : right::addBlock);
        double[] v = left.merge(right).variances();
        double blocks = 2.0 + STABLE_N / (double) sizes[0];
        double derived = gamma(STABLE_N + 8 * blocks);
        for (int j = 0; j < STABLE_D; j++) {
          double truth = exact[j + j * STABLE_D];
          double rel = Math.abs(v[j] - truth) / truth;
          String what = "column " + j + ", blocks " + java.util.Arrays.toString(sizes) + ", gram " + gram
              + ", shifted " + shift;
          assertTrue(rel < 1e-6, what + ": relative error " + rel + " >= 1e-6");
          assertTrue(rel <= derived, what + ": relative error " + rel + " > derived bound " + derived);
        }
        assertArrayEquals(new double[] {OFFSET, OFFSET, OFFSET, OFFSET}, left.mean(), 1e-3,
            "means stay at the offset");
      }
    }
  }

  /**
   * Offset 1e16 and standard deviation 16 in one block of 2^20 rows (the largest reduce.block-rows allows): each of
   * the four chains of the block's sum reaches 2.6e21, where one ulp is 5e5, so the first mean misses by thousands
   * of standard deviations (measured here: about 4e4, so rows res^2 / ss = 6e6) and the Gram about it would lose
   * some 22 bits to the residual correction (measured with the second centring switched off: relative error 3e-10,
   * above the bound below); the second centring (taken when the correction exceeds 1/16 of the sum of squares) keeps the
   * variance to the exact one (BigDecimal, as above) within gamma_{n + 16} (Higham 2002, §4.2; values 1e16 +/- 100
   * stored in doubles are multiples of 2, and subtracting a double near them is exact by Sterbenz's lemma).
   */
  @Test
  void aHugeOffsetInOneLargeBlockIsCentredTwice() {
    int n = 1 << 20;
    Random random = new Random(29);
    double[] x = new double[n];
    for (int i = 0; i < n; i++) {
      x[i] = 1e16 + 16 * random.nextGaussian();
    }
    double truth = MathFixtures.exactCovariance(x, n, 1)[0];
    for (boolean gram : new boolean[] {true, false}) {
      Moments m = Moments.empty(1, gram);
      m.addBlock(x.clone(), n, n);
      double rel = Math.abs(m.variances()[0] - truth) / truth;
      assertTrue(rel <= gamma(n + 16), "gram " + gram + ": relative error " + rel + " > " + gamma(n + 16));
      assertEquals(1e16, m.mean()[0], 2, "the mean stays at the offset");
    }
  }

  /**
   * The naive one-pass formula (sum x^2 - n mean^2) / (n - 1) on the same data: sum x^2 is about 3e21 (n = 3000),
   * where one ulp is 5e5, while the centred sum of squares it should resolve is about n 1e-6 = 3e-3. The difference of
   * the two large terms is therefore rounding noise (or exactly zero): no digit of the variance is right, a relative
   * error of at least 0.5, against below 1e-6 required above. Shown so that the stability test is known to be a real
   * test.
   */
  @Test
  void theNaiveSumOfSquaresFormulaFailsOnTheSameData() {
    double[] x = offsetData();
    double[] exact = MathFixtures.exactCovariance(x, STABLE_N, STABLE_D);
    for (int j = 0; j < STABLE_D; j++) {
      double s = 0;
      double s2 = 0;
      for (int i = 0; i < STABLE_N; i++) {
        double v = x[i + j * STABLE_N];
        s += v;
        s2 += v * v;
      }
      double mean = s / STABLE_N;
      double naive = (s2 - STABLE_N * mean * mean) / (STABLE_N - 1);
      double truth = exact[j + j * STABLE_D];
      double rel = Math.abs(naive - truth) / truth;
      assertTrue(rel >= 0.5, "column " + j + ": the naive formula was expected to fail, relative error " + rel);
    }
  }

  /**
   * Through Spectrum.ofCovariance the offset data give no negative eigenvalue and eigenvalues within the
   * perturbation bound of EJML's eigenvalues of the exact covariance: Weyl's inequality gives |lambda_i - lambda_i'|
   * <= ||C - C'||_2 <= ||C - C'||_F, and C - C' is bounded entrywise by the relative variance error (asserted above)
   * times sqrt(C_aa C_bb); dsyevd adds c d u ||C|| (LAPACK Users' Guide, §4.7), with c = 30 (recalled from memory:
   * the threshold LAPACK's own eigensolver tests accept for such ratios).
   */
  @Test
  void offsetDataGiveNoNegativeEigenvalue() {
    double[] x = offsetData();
    Moments m = Moments.empty(STABLE_D, true);
    MathFixtures.feed(x, STABLE_N, STABLE_D, new int[] {100}, 0, m::addBlock);
    double[] cov = m.covariance();
    Spectrum spectrum = Spectrum.ofCovariance(cov, STABLE_D);
    double[] exact = MathFixtures.exactCovariance(x, STABLE_N, STABLE_D);
    double[] reference = MathFixtures.symmetricEigen(exact, STABLE_D).values();
    double frob = 0;
    for (int a = 0; a < STABLE_D; a++) {
      for (int b = 0; b < STABLE_D; b++) {
        double t = 1e-6 * Math.sqrt(exact[a + a * STABLE_D] * exact[b + b * STABLE_D]);
        frob += t * t;
      }
    }
    double tol = Math.sqrt(frob) + 30 * STABLE_D * U * reference[0];
    for (int i = 0; i < STABLE_D; i++) {
      assertTrue(spectrum.eigenvalues()[i] > 0, "eigenvalue " + i + " = " + spectrum.eigenvalues()[i]);
      assertEquals(reference[i], spectrum.eigenvalues()[i], tol, "eigenvalue " + i);
    }
  }
}
