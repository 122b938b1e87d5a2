package io.eigenmill.pca.math;

import static io.eigenmill.testing.MathFixtures.gamma;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.BlockSummary;
import io.eigenmill.testing.MathFixtures;
import io.eigenmill.testing.SummaryContract;
import org.junit.jupiter.api.Test;

/**
 * {@link SketchProduct} against the brute-force Z = A^T (A Q) computed with EJML 0.43.1's products.
 *
 * <p>Tolerance: a product of inner dimension m is within gamma_m |X| |Y| entrywise (Higham 2002, eq. 3.13), so
 * T = A Q is within gamma_d |A| |Q| and Z = A^T T within gamma_n |A|^T |T| + |A|^T |Delta T|, i.e.
 * (gamma_n + gamma_d + gamma_n gamma_d) (|A|^T |A| |Q|); the code and EJML each carry that much, and summing
 * partitions adds one rounding per partition relative to the same magnitude.
 */
class SketchProductTest {
  private static final int N = 700;
  private static final int D = 20;
  private static final int L = 6;

  private static double[] abs(double[] a) {
    double[] out = new double[a.length];
    for (int i = 0; i < a.length; i++) {
      out[i] = Math.abs(a[i]);
    }
    return out;
  }

  private static void assertProductMatches(double[] a, int n, double[] q, double[] z, int partitions) {
    double[] expected = MathFixtures.multiplyTransA(a, MathFixtures.multiply(a, q, n, D, L), n, D, L);
    double[] magnitude = MathFixtures.multiplyTransA(abs(a), MathFixtures.multiply(abs(a), abs(q), n, D, L), n, D,
        L);
    double g = gamma(n) + gamma(D) + gamma(n) * gamma(D);
    for (int i = 0; i < expected.length; i++) {
      double tol = (2 * g + gamma(partitions)) * magnitude[i];
      assertEquals(expected[i], z[i], tol, "Z entry " + i);
    }
  }

  @Test
  void blocksAndPartitionsMatchTheBruteForceProduct() {
    double[] a = MathFixtures.gaussian(N, D, 71);
    double[] q = MathFixtures.orthonormal(D, L, 72);
    SketchProduct total = SketchProduct.empty(D, L);
    int[][] parts = {{0, 250}, {250, 1}, {251, 449}};
    for (int[] p : parts) {
      SketchProduct part = SketchProduct.empty(D, L);
      MathFixtures.feed(MathFixtures.rows(a, N, D, p[0], p[1]), p[1], D, new int[] {64, 1, 3}, 4,
          (b, rows, ld) -> part.addBlock(b, rows, ld, q));
      assertEquals(p[1], part.count());
      total.merge(part);
    }
    assertEquals(N, total.count());
    assertProductMatches(a, N, q, total.product(), parts.length);
  }

  /** Empty sketches against one basis, as a task makes them from its broadcast. */
  private record WithBasis(int d, int l, double[] q) implements BlockSummary.Factory<SketchProduct> {
    @Override public SketchProduct empty() {
      return SketchProduct.empty(d, l, q);
    }
  }

  /**
   * The {@link BlockSummary} contract through the interface (testing.SummaryContract): empty is the identity bit for
   * bit on either side; the halves' sketches merged match the brute-force product of all the rows within the bound
   * of the class comment with two partitions. A sketch made without a basis refuses blocks without one.
   */
  @Test
  void asABlockSummaryEmptyIsTheIdentityAndMergedHalvesMatchTheBruteForceProduct() {
    double[] a = MathFixtures.gaussian(N, D, 77);
    double[] q = MathFixtures.orthonormal(D, L, 78);
    BlockSummary.Factory<SketchProduct> factory = new WithBasis(D, L, q);
    SketchProduct halves = SummaryContract.mergedHalves(factory, a, N, D, 301, new int[] {64, 1, 3});
    SummaryContract.assertEmptyIsTheIdentity(factory, halves);
    assertEquals(N, halves.count());
    assertProductMatches(a, N, q, halves.product(), 2);
    assertThrows(IllegalStateException.class, () -> SketchProduct.empty(D, L).addBlock(new double[D], 1, 1));
    assertThrows(IllegalArgumentException.class, () -> SketchProduct.empty(D, L, new double[D * L - 1]));
  }

  @Test
  void addBlockLeavesTheBlockAndTheBasisUnchanged() {
    double[] a = MathFixtures.gaussian(30, D, 73);
    double[] q = MathFixtures.orthonormal(D, L, 74);
    double[] block = MathFixtures.block(a, 30, D, 0, 30, 33);
    double[] blockBefore = block.clone();
    double[] qBefore = q.clone();
    SketchProduct s = SketchProduct.empty(D, L);
    s.addBlock(block, 30, 33, q);
    assertArrayEquals(blockBefore, block, 0.0);
    assertArrayEquals(qBefore, q, 0.0);
    assertProductMatches(a, 30, q, s.product(), 1);
  }

  @Test
  void mergingWithAnEmptySideIsTheIdentityAndLeavesTheOtherSideAlone() {
    double[] a = MathFixtures.gaussian(100, D, 75);
    double[] q = MathFixtures.orthonormal(D, L, 76);
    SketchProduct s = SketchProduct.empty(D, L);
    MathFixtures.feed(a, 100, D, new int[] {40}, 0, (b, rows, ld) -> s.addBlock(b, rows, ld, q));
    double[] before = s.product();
    // adding zeros is exact
    assertArrayEquals(before, s.merge(SketchProduct.empty(D, L)).product(), 0.0);
    assertEquals(100, s.count());
    SketchProduct fromEmpty = SketchProduct.empty(D, L).merge(s);
    assertArrayEquals(before, fromEmpty.product(), 0.0);
    assertEquals(100, fromEmpty.count());
    assertArrayEquals(before, s.product(), 0.0, "merge changed the other side");
    s.addBlock(new double[D], 0, 1, q);
    assertArrayEquals(before, s.product(), 0.0, "an empty block changed Z");
  }

  @Test
  void productIsACopy() {
    SketchProduct s = SketchProduct.empty(D, L);
    s.product()[0] = 42;
    assertEquals(0.0, s.product()[0], 0.0);
  }

  @Test
  void mismatchedShapesAreRefused() {
    assertThrows(IllegalArgumentException.class, () -> SketchProduct.empty(D, L).merge(SketchProduct.empty(D, L + 1)));
    assertThrows(IllegalArgumentException.class, () -> SketchProduct.empty(D, L).merge(SketchProduct.empty(D + 1, L)));
  }

  @Test
  void aGrowingBlockSizeReusesNoStaleScratch() {
    // a small block first, then a larger one: the scratch must grow and the result stay exact to rounding
    double[] a = MathFixtures.gaussian(300, D, 77);
    double[] q = MathFixtures.orthonormal(D, L, 78);
    SketchProduct s = SketchProduct.empty(D, L);
    MathFixtures.feed(a, 300, D, new int[] {2, 298}, 0, (b, rows, ld) -> s.addBlock(b, rows, ld, q));
    assertTrue(s.count() == 300);
    assertProductMatches(a, 300, q, s.product(), 1);
  }
}
