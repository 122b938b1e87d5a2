package io.eigenmill.math;

import static io.eigenmill.testing.MathFixtures.gamma;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.MathFixtures;
import io.eigenmill.testing.SummaryContract;
import java.util.Arrays;
import java.util.Random;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.junit.jupiter.api.Test;

/**
 * {@link ColumnStats} against Apache Commons Math 3.6.1 {@code Mean} over each column's non-missing values (picked
 * out by a brute-force loop), and the imputation flow of the fit (ColumnStats means into BlockPrep.imputeOnly).
 *
 * <p>Tolerance: Welford's running mean and Commons Math's mean (the sum divided by m, then corrected by the mean
 * residual, as its bytecode in the 3.6.1 jar shows) are each within gamma_m max|x| of the exact mean of m values
 * (Higham 2002, eq. 4.4; Welford's update rounds the running mean once per value relative to max|x|), so they
 * differ by at most 2 gamma_m max|x|; merging partitions adds 3 roundings per merge.
 */
class ColumnStatsTest {
  private static final int N = 1500;
  private static final int D = 5;

  /** Column j has offset 10^j and a missing share of j / 6 (column 0 is complete). */
  private static double[] data(long seed) {
    Random random = new Random(seed);
    double[] x = new double[N * D];
    for (int j = 0; j < D; j++) {
      for (int i = 0; i < N; i++) {
        x[i + j * N] = random.nextDouble() < j / 6.0 ? Double.NaN : Math.pow(10, j) + random.nextGaussian();
      }
    }
    return x;
  }

  private static double[] present(double[] x, int n, int j) {
    return Arrays.stream(x, j * n, (j + 1) * n).filter(v -> !Double.isNaN(v)).toArray();
  }

  private static void assertMatchesCommonsMath(double[] x, int n, ColumnStats s, int merges) {
    long[] counts = s.counts();
    double[] means = s.means();
    for (int j = 0; j < D; j++) {
      double[] values = present(x, n, j);
      assertEquals(values.length, counts[j], "count of column " + j);
      double max = Arrays.stream(values).map(Math::abs).max().orElse(0);
      double tol = (2 * gamma(values.length) + gamma(3.0 * merges)) * max;
      assertEquals(new Mean().evaluate(values), means[j], tol, "mean of column " + j);
    }
  }

  @Test
  void skipsMissingCellsAndMatchesCommonsMathMeans() {
    double[] x = data(101);
    ColumnStats s = ColumnStats.empty(D);
    MathFixtures.feed(x, N, D, new int[] {100, 1, 37}, 2, s::addBlock);
    assertTrue(s.counts()[D - 1] < N, "the seeded data must have missing cells");
    assertMatchesCommonsMath(x, N, s, 0);
  }

  @Test
  void mergedPartitionsMatchTheWhole() {
    double[] x = data(102);
    ColumnStats total = ColumnStats.empty(D);
    int[] starts = {0, 1, 400, 1100, N};
    for (int p = 0; p + 1 < starts.length; p++) {
      int rows = starts[p + 1] - starts[p];
      ColumnStats part = ColumnStats.empty(D);
      MathFixtures.feed(MathFixtures.rows(x, N, D, starts[p], rows), rows, D, new int[] {64}, 0, part::addBlock);
      total.merge(part);
    }
    assertMatchesCommonsMath(x, N, total, starts.length - 1);
  }

  @Test
  void mergingWithAnEmptySideIsTheIdentity() {
    double[] x = data(103);
    ColumnStats a = ColumnStats.empty(D);
    MathFixtures.feed(x, N, D, new int[] {500}, 0, a::addBlock);
    long[] counts = a.counts();
    double[] means = a.means();
    a.merge(ColumnStats.empty(D));
    assertArrayEquals(counts, a.counts());
    assertArrayEquals(means, a.means(), 0.0);
    ColumnStats b = ColumnStats.empty(D).merge(a);
    assertArrayEquals(counts, b.counts());
    assertArrayEquals(means, b.means(), 0.0);
  }

  /**
   * The {@link BlockSummary} contract through the interface (testing.SummaryContract): empty is the identity bit for
   * bit on either side; the halves' statistics merged match Commons Math's means of all the present values within
   * the bound of the class comment with one merge.
   */
  @Test
  void asABlockSummaryEmptyIsTheIdentityAndMergedHalvesMatchCommonsMath() {
    double[] x = data(107);
    BlockSummary.Factory<ColumnStats> factory = ColumnStats.factory(D);
    ColumnStats halves = SummaryContract.mergedHalves(factory, x, N, D, 611, new int[] {100, 1, 37});
    SummaryContract.assertEmptyIsTheIdentity(factory, halves);
    assertMatchesCommonsMath(x, N, halves, 1);
    assertThrows(IllegalArgumentException.class, () -> ColumnStats.empty(D).merge(ColumnStats.empty(D + 1)));
  }

  @Test
  void aColumnMissingFromOnePartitionTakesTheOthersValues() {
    // partition 1 has no value in column 0, partition 2 has all of them
    double[] first = {Double.NaN, Double.NaN, 1, 2};
    double[] second = {4, 6, 3, 5};
    ColumnStats a = ColumnStats.empty(2);
    a.addBlock(first, 2, 2);
    ColumnStats b = ColumnStats.empty(2);
    b.addBlock(second, 2, 2);
    a.merge(b);
    assertArrayEquals(new long[] {2, 4}, a.counts());
    // brute force: column 0 is {4, 6}; column 1 is {1, 2, 3, 5}; small integers, exact in binary
    assertArrayEquals(new double[] {5, 2.75}, a.means(), 0.0);
  }

  @Test
  void imputationFillsEachColumnWithItsMeanAsTheFitDoes() {
    double[] x = data(104);
    ColumnStats s = ColumnStats.empty(D);
    MathFixtures.feed(x, N, D, new int[] {N}, 0, s::addBlock);
    double[] means = s.means();
    double[] block = MathFixtures.block(x, N, D, 0, N, N);
    BlockPrep.imputeOnly(means).apply(block, N, N);
    for (int j = 0; j < D; j++) {
      double[] values = present(x, N, j);
      double expected = new Mean().evaluate(values);
      double max = Arrays.stream(values).map(Math::abs).max().orElse(0);
      for (int i = 0; i < N; i++) {
        double original = x[i + j * N];
        if (Double.isNaN(original)) {
          assertEquals(expected, block[i + j * N], 2 * gamma(values.length) * max, "imputed (" + i + ", " + j + ")");
        } else {
          assertEquals(original, block[i + j * N], 0.0);
        }
      }
    }
  }
}
