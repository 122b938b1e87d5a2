package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * {@link ColumnBlock#compact}, which drops the flagged rows of a slice from a column-major block by moving runs,
 * against the rule written out as a plain filter (keep the unflagged rows of the slice in order; rows before the
 * slice, the other slices' rows and the flags are left alone); and a block's slices under each treatment of missing
 * cells against the same filter written out in the test. Exact comparisons: values are only moved or written.
 */
class ColumnBlockTest {
  private static final int D = 3;
  private static final int LD = 40;

  /** The expected block: each column's slice rows filtered, written back from {@code from}; the rest unchanged. */
  private static double[] filtered(double[] block, int from, int t, boolean[] bad) {
    double[] out = block.clone();
    for (int j = 0; j < D; j++) {
      List<Double> kept = new ArrayList<>();
      for (int i = from; i < from + t; i++) {
        if (!bad[i]) {
          kept.add(block[j * LD + i]);
        }
      }
      for (int r = 0; r < kept.size(); r++) {
        out[j * LD + from + r] = kept.get(r);
      }
    }
    return out;
  }

  private static int[] filteredOrigins(int[] origins, int from, int t, boolean[] bad) {
    int[] out = origins.clone();
    int w = from;
    for (int i = from; i < from + t; i++) {
      if (!bad[i]) {
        out[w++] = origins[i];
      }
    }
    return out;
  }

  private static void check(boolean[] bad, int from, int t) {
    SplittableRandom rnd = new SplittableRandom(bad.length * 31L + from * 7L + t);
    double[] block = new double[D * LD];
    for (int i = 0; i < block.length; i++) {
      block[i] = rnd.nextDouble();
    }
    int[] origins = new int[LD];
    for (int i = 0; i < LD; i++) {
      origins[i] = 1000 + i;
    }
    int flaggedRows = 0;
    for (int i = from; i < from + t; i++) {
      flaggedRows += bad[i] ? 1 : 0;
    }
    double[] expected = filtered(block, from, t, bad);
    int[] expectedOrigins = filteredOrigins(origins, from, t, bad);
    boolean[] flags = bad.clone();
    int kept = ColumnBlock.compact(block, D, LD, from, t, bad, origins);
    assertEquals(t - flaggedRows, kept, "rows kept");
    // only the first kept rows of the slice are defined afterwards; beyond them the block is scratch
    for (int j = 0; j < D; j++) {
      for (int i = 0; i < LD; i++) {
        if (i < from + kept || i >= from + t) {
          assertEquals(expected[j * LD + i], block[j * LD + i], "column " + j + " row " + i);
        }
      }
    }
    int[] keptOrigins = java.util.Arrays.copyOf(origins, from + kept);
    assertArrayEquals(java.util.Arrays.copyOf(expectedOrigins, from + kept), keptOrigins, "origins");
    assertArrayEquals(flags, bad, "the flags are read, not changed");
  }

  @Test
  void noFlaggedRowLeavesTheBlockAlone() {
    check(new boolean[LD], 5, 30);
  }

  @Test
  void flaggedRowsAtTheEdgesInRunsAndEverywhere() {
    int from = 4;
    int t = 32;
    int[][] patterns = {
        {0}, {t - 1}, {0, t - 1}, {3, 4, 5}, {0, 1, 2, 10, 11, 30, 31}, {7, 9, 11, 13},
    };
    for (int[] pattern : patterns) {
      boolean[] bad = new boolean[LD];
      for (int i : pattern) {
        bad[from + i] = true;
      }
      check(bad, from, t);
    }
    boolean[] all = new boolean[LD];
    java.util.Arrays.fill(all, from, from + t, true);
    check(all, from, t);
  }

  @Test
  void randomFlagsAtSeveralDensities() {
    SplittableRandom rnd = new SplittableRandom(20261202);
    for (double p : new double[] {0.02, 0.2, 0.5, 0.9}) {
      for (int trial = 0; trial < 50; trial++) {
        int from = rnd.nextInt(LD);
        int t = rnd.nextInt(LD - from + 1);
        boolean[] bad = new boolean[LD];
        for (int i = 0; i < LD; i++) {
          bad[i] = rnd.nextDouble() < p;
        }
        check(bad, from, t);
      }
    }
  }

  /** Writes slice rows {@code [0, t)} of {@code x} (row r, column j: 100 r + j) at the block's base; NaN is missing. */
  private static void writeSlice(ColumnBlock b, double[][] x) {
    for (int i = 0; i < x.length; i++) {
      for (int j = 0; j < D; j++) {
        b.block()[j * b.ld() + b.base() + i] = x[i][j];
        if (Double.isNaN(x[i][j])) {
          b.markMissing(i, j);
        }
      }
    }
  }

  private static double[][] slice(int first, int t, int... missingRows) {
    double[][] x = new double[t][D];
    for (int i = 0; i < t; i++) {
      for (int j = 0; j < D; j++) {
        x[i][j] = 100.0 * (first + i) + j;
      }
    }
    for (int r : missingRows) {
      x[r][r % D] = Double.NaN;
    }
    return x;
  }

  @Test
  void aDroppingBlockKeepsTheCompleteRowsOfEachSliceInOrderAndMovesTheirSources() {
    ColumnBlock b = ColumnBlock.dropping(D, LD);
    int[] sources = new int[LD];
    List<double[]> expected = new ArrayList<>();
    int first = 0;
    for (int[] missing : new int[][] {{}, {0, 4}, {2}, {0, 1, 2}}) {
      int t = missing.length == 3 ? 3 : 7;
      double[][] x = slice(first, t, missing);
      for (int i = 0; i < t; i++) {
        sources[b.base() + i] = first + i;
      }
      writeSlice(b, x);
      List<Integer> dropped = new ArrayList<>();
      for (int r : missing) {
        dropped.add(r);
      }
      for (int i = 0; i < t; i++) {
        if (!dropped.contains(i)) {
          expected.add(x[i]);
        }
      }
      assertEquals(t - missing.length, b.commit(t, sources), "rows kept of slice from " + first);
      first += t;
    }
    assertEquals(expected.size(), b.rows());
    for (int r = 0; r < expected.size(); r++) {
      for (int j = 0; j < D; j++) {
        assertEquals(expected.get(r)[j], b.block()[j * LD + r], "row " + r + " column " + j);
      }
      assertEquals((int) (expected.get(r)[0] / 100), sources[r], "source of row " + r);
    }
  }

  @Test
  void aMarkingBlockKeepsEveryRowWithNanInTheMissingCellsAndCountsThem() {
    long[] missingCells = new long[D];
    ColumnBlock b = ColumnBlock.of(D, LD, ReadMode.MARK, true, missingCells);
    double[][] x = slice(0, 6, 1, 5);
    writeSlice(b, x);
    assertEquals(6, b.commit(6, null));
    assertArrayEquals(new long[] {0, 1, 1}, missingCells, "missing cells per column (rows 1 and 5: columns 1, 2)");
    for (int i = 0; i < 6; i++) {
      for (int j = 0; j < D; j++) {
        assertEquals(Double.doubleToRawLongBits(x[i][j]), Double.doubleToRawLongBits(b.block()[j * LD + i]));
      }
      assertEquals(1.0, b.block()[D * LD + i], "the column of ones");
    }
    // the flags were cleared: a later slice without missing cells keeps all its rows
    writeSlice(b, slice(6, 4));
    assertEquals(4, b.commit(4, null));
    assertEquals(10, b.rows());
  }

  @Test
  void anImputingBlockFillsTheMissingCellsAndKeepsTheRows() {
    double[] fills = {-1.0, -2.0, -3.0};
    ColumnBlock b = ColumnBlock.imputing(D, LD, fills);
    double[][] x = slice(0, 5, 0, 4);
    writeSlice(b, x);
    assertEquals(5, b.commit(5, null));
    for (int i = 0; i < 5; i++) {
      for (int j = 0; j < D; j++) {
        double want = Double.isNaN(x[i][j]) ? fills[j] : x[i][j];
        assertEquals(want, b.block()[j * LD + i], "row " + i + " column " + j);
      }
    }
  }

  @Test
  void aFullBlockIsHandedOverWholeAndTheBlockGoesOnInAFreshArray() {
    ColumnBlock b = ColumnBlock.dropping(D, 4);
    assertEquals(4, b.room(9));
    writeSlice(b, slice(0, 4));
    b.commit(4, null);
    assertTrue(b.isFull());
    assertEquals(0, b.room(1));
    double[] whole = b.block();
    assertTrue(whole == b.handOver(), "the array as it is, no copy");
    assertEquals(0, b.rows());
    assertTrue(whole != b.block(), "a fresh array");
    assertEquals(whole.length, b.block().length);
    assertEquals(100.0 * 3 + 2, whole[2 * 4 + 3]);
  }
}
