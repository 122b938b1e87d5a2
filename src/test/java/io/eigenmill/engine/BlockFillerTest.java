package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * {@link BlockFiller#compact}, which drops the flagged rows of a slice from a column-major block by moving runs,
 * against the rule written out as a plain filter (keep the unflagged rows of the slice in order; rows before the
 * slice, the other slices' rows and the flags are left alone). Exact comparisons: values are only moved.
 */
class BlockFillerTest {
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
    int kept = BlockFiller.compact(block, D, LD, from, t, bad, origins);
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
}
