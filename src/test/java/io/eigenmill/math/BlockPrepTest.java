package io.eigenmill.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.junit.jupiter.api.Test;

/**
 * {@link BlockPrep} against a brute-force loop written from its Javadoc: NaN cells replaced by the imputation value,
 * then x -> (x - centre) * factor per column, then the kept columns moved in order to the front. Java evaluates
 * (x - c) * f identically wherever it is written, so the comparison is exact.
 */
class BlockPrepTest {
  private static final int ROWS = 23;
  private static final int LD = 27;
  private static final int D = 6;

  /** A block with NaN in about a fifth of the cells and NaN padding rows. */
  private static double[] blockWithGaps(long seed) {
    Random random = new Random(seed);
    double[] b = new double[LD * D];
    java.util.Arrays.fill(b, Double.NaN);
    for (int j = 0; j < D; j++) {
      for (int i = 0; i < ROWS; i++) {
        b[i + j * LD] = random.nextInt(5) == 0 ? Double.NaN : 100 * j + random.nextGaussian();
      }
    }
    return b;
  }

  private static double prepared(double x, double[] impute, double[] centre, double[] factor, int j) {
    double v = impute != null && Double.isNaN(x) ? impute[j] : x;
    return centre == null ? v : (v - centre[j]) * factor[j];
  }

  private static void assertPaddingUntouched(double[] block, int columns) {
    for (int j = 0; j < columns; j++) {
      for (int i = ROWS; i < LD; i++) {
        assertTrue(Double.isNaN(block[i + j * LD]), "padding (" + i + ", " + j + ") was written");
      }
    }
  }

  @Test
  void identityLeavesTheBlockAlone() {
    double[] b = blockWithGaps(91);
    double[] before = b.clone();
    BlockPrep.identity().apply(b, ROWS, LD);
    assertArrayEquals(before, b, 0.0);
  }

  @Test
  void imputeOnlyFillsMissingCellsAndNothingElse() {
    double[] b = blockWithGaps(92);
    double[] before = b.clone();
    double[] fill = {1, 2, 3, 4, 5, 6};
    BlockPrep p = BlockPrep.imputeOnly(fill);
    fill[0] = 99; // the preparation keeps its own copy
    p.apply(b, ROWS, LD);
    int filled = 0;
    for (int j = 0; j < D; j++) {
      for (int i = 0; i < ROWS; i++) {
        double x = before[i + j * LD];
        double expected = Double.isNaN(x) ? j + 1 : x;
        filled += Double.isNaN(x) ? 1 : 0;
        assertEquals(expected, b[i + j * LD], 0.0, "cell (" + i + ", " + j + ")");
      }
    }
    assertTrue(filled > 0, "the seeded block must have missing cells");
    assertPaddingUntouched(b, D);
  }

  @Test
  void imputeCentreScaleAndKeepMatchTheBruteForce() {
    double[] b = blockWithGaps(93);
    double[] before = b.clone();
    double[] impute = {0.5, 100.5, 200.5, 300.5, 400.5, 500.5};
    double[] centre = {0.1, 100.2, 200.3, 300.4, 400.5, 500.6};
    double[] factor = {2, 0.5, 0, 1 / 3.0, 0, 7};
    int[] keep = {0, 1, 3, 5};
    BlockPrep.of(impute, centre, factor, keep).apply(b, ROWS, LD);
    for (int jj = 0; jj < keep.length; jj++) {
      int j = keep[jj];
      for (int i = 0; i < ROWS; i++) {
        double expected = prepared(before[i + j * LD], impute, centre, factor, j);
        assertEquals(expected, b[i + jj * LD], 0.0, "kept column " + jj + " (source " + j + "), row " + i);
      }
    }
    assertPaddingUntouched(b, keep.length);
  }

  @Test
  void withoutImputationMissingCellsStayMissingAndAllColumnsAreKept() {
    double[] b = blockWithGaps(94);
    double[] before = b.clone();
    double[] centre = {1, 2, 3, 4, 5, 6};
    double[] factor = {1, 1, 2, 2, 3, 3};
    BlockPrep.of(null, centre, factor, null).apply(b, ROWS, LD);
    for (int j = 0; j < D; j++) {
      for (int i = 0; i < ROWS; i++) {
        double x = before[i + j * LD];
        double expected = prepared(x, null, centre, factor, j);
        assertEquals(expected, b[i + j * LD], 0.0, "cell (" + i + ", " + j + ")");
      }
    }
    assertPaddingUntouched(b, D);
  }

  @Test
  void keepingTheLastColumnsOnlyMovesThemToTheFront() {
    double[] b = blockWithGaps(95);
    double[] before = b.clone();
    double[] zeros = new double[D];
    double[] ones = {1, 1, 1, 1, 1, 1};
    int[] keep = {4, 5};
    BlockPrep.of(null, zeros, ones, keep).apply(b, ROWS, LD);
    for (int jj = 0; jj < keep.length; jj++) {
      for (int i = 0; i < ROWS; i++) {
        // (x - 0) * 1 is x exactly (and NaN stays NaN)
        assertEquals(before[i + keep[jj] * LD], b[i + jj * LD], 0.0, "row " + i + " of kept column " + jj);
      }
    }
  }
}
