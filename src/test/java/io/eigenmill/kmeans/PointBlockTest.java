package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertSame;

import io.eigenmill.kmeans.math.LloydStats;
import io.eigenmill.kmeans.math.NearestKeys;
import io.eigenmill.kmeans.math.NearestSearch;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The cached blocks shifted in place by the first search pass ({@link PointBlock#toFrame}) against the arithmetic
 * they replace: a fresh copy of the values minus the shift, and the squared norms summed coordinate by coordinate
 * (NearestSearch.squaredNorms, the order the search uses). The values are offset from 0 by 1e4 so that the shift matters. Every comparison is
 * exact: the same IEEE operations in the same order must give the same bits.
 */
class PointBlockTest {
  private static final int D = 4;

  private static double[] values(SplittableRandom rnd, int rows) {
    double[] v = new double[rows * D];
    for (int i = 0; i < v.length; i++) {
      v[i] = 1e4 + rnd.nextGaussian() * 3;
    }
    return v;
  }

  private static long[] ids(SplittableRandom rnd, int rows) {
    long[] ids = new long[rows];
    for (int i = 0; i < rows; i++) {
      ids[i] = rnd.nextLong();
    }
    return ids;
  }

  @Test
  void theFrameIsTheCopyMinusTheShiftWithItsNormsAndIsKept() {
    SplittableRandom rnd = new SplittableRandom(3);
    int rows = 37;
    double[] read = values(rnd, rows);
    PointBlock b = new PointBlock(rows, D, read.clone(), ids(rnd, rows), 0);
    double[] shift = {1e4, 1e4 + 0.5, 1e4 - 0.25, 9999.125};
    double[] norms = b.toFrame(shift);
    for (int l = 0; l < D; l++) {
      for (int i = 0; i < rows; i++) {
        assertEquals(Double.doubleToRawLongBits(read[l * rows + i] - shift[l]),
            Double.doubleToRawLongBits(b.values[l * rows + i]), "coordinate " + l + " of row " + i);
      }
    }
    for (int i = 0; i < rows; i++) {
      double s = 0;
      for (int l = 0; l < D; l++) {
        s += b.values[l * rows + i] * b.values[l * rows + i];
      }
      assertEquals(Double.doubleToRawLongBits(s), Double.doubleToRawLongBits(norms[i]), "norm of row " + i);
    }
    double[] shifted = b.values.clone();
    assertSame(norms, b.toFrame(shift.clone()), "the same frame again: nothing recomputed");
    assertArrayEquals(shifted, b.values, 0.0, "and nothing shifted twice");
    assertNull(b.toFrame(null), "back to the values as read: no norms");
    for (int i = 0; i < read.length; i++) {
      // v - s + s is v within one rounding of the shifted value (|v - s| <= 30 here)
      assertEquals(read[i], b.values[i], Math.ulp(1e4), "value " + i + " as read again");
    }
  }

  /**
   * Two Lloyd passes over the same blocks (the second finds them shifted) and a pass over chunks copied the old way
   * (values minus the shift into a scratch, norms computed by the search) give the same buffer, bit for bit; so does
   * the path for blocks larger than a search chunk (many centroids).
   */
  @Test
  void lloydPassesOverShiftedBlocksEqualPassesOverCopies() {
    SplittableRandom rnd = new SplittableRandom(8);
    int[] sizes = {1024, 1024, 700, 0, 1024, 5};
    List<double[]> read = new ArrayList<>();
    List<long[]> ids = new ArrayList<>();
    for (int rows : sizes) {
      read.add(values(rnd, rows));
      ids.add(ids(rnd, rows));
    }
    double[] shift = {1e4 + 0.1, 1e4 - 0.2, 1e4, 1e4 + 0.3};
    List<double[]> perRun = new ArrayList<>();
    for (int k : new int[] {3, 5}) {
      double[] c = new double[k * D];
      for (int i = 0; i < c.length; i++) {
        c[i] = rnd.nextGaussian() * 3;
      }
      perRun.add(c);
    }
    CentroidTable table = CentroidTable.of(D, shift, perRun);
    List<PointBlock> cached = new ArrayList<>();
    for (int b = 0; b < sizes.length; b++) {
      cached.add(new PointBlock(sizes[b], D, read.get(b).clone(), ids.get(b), 0));
    }
    byte[] first = ClusterPasses.fold(table, new ClusterPasses.Lloyd(), cached.iterator(), NearestKeys.best()).toBytes();
    byte[] second = ClusterPasses.fold(table, new ClusterPasses.Lloyd(), cached.iterator(), NearestKeys.best()).toBytes();
    assertArrayEquals(first, second, "the second pass over blocks shifted by the first");

    // the arithmetic before blocks were shifted in place: each chunk copied minus the shift
    NearestSearch search = table.search(ClusterPasses.CHUNK_ROWS, false, NearestKeys.best());
    LloydStats copied = new ClusterPasses.Lloyd().zero(table);
    for (int b = 0; b < sizes.length; b++) {
      int rows = sizes[b];
      if (rows == 0) {
        continue;
      }
      double[] x = new double[rows * D];
      for (int i = 0; i < x.length; i++) {
        x[i] = read.get(b)[i] - shift[i / rows];
      }
      search.search(x, 0, rows, rows);
      copied.add(search, x, 0, rows, rows, ids.get(b), 0);
    }
    assertArrayEquals(copied.toBytes(), first, "shifted in place and copied give the same buffer");

    // blocks of 1024 rows against 400 centroids: search chunks of 655 rows, copied out of the shifted blocks
    List<double[]> many = new ArrayList<>();
    double[] c = new double[400 * D];
    for (int i = 0; i < c.length; i++) {
      c[i] = rnd.nextGaussian() * 3;
    }
    many.add(c);
    CentroidTable wide = CentroidTable.of(D, shift, many);
    assertEquals(655, wide.search(ClusterPasses.CHUNK_ROWS, false, NearestKeys.best()).chunk());
    List<PointBlock> fresh = new ArrayList<>();
    for (int b = 0; b < sizes.length; b++) {
      fresh.add(new PointBlock(sizes[b], D, read.get(b).clone(), ids.get(b), 0));
    }
    byte[] viaChunks = ClusterPasses.fold(wide, new ClusterPasses.Lloyd(), fresh.iterator(), NearestKeys.best()).toBytes();
    NearestSearch wideSearch = new NearestSearch(D, wide.centroids, wide.offsets, 1024, false);
    LloydStats whole = new ClusterPasses.Lloyd().zero(wide);
    for (int b = 0; b < sizes.length; b++) {
      if (sizes[b] > 0) {
        double[] x = new double[sizes[b] * D];
        for (int i = 0; i < x.length; i++) {
          x[i] = read.get(b)[i] - shift[i / sizes[b]];
        }
        wideSearch.search(x, 0, sizes[b], sizes[b]);
        whole.add(wideSearch, x, 0, sizes[b], sizes[b], ids.get(b), 0);
      }
    }
    LloydStats chunked = LloydStats.fromBytes(viaChunks);
    for (int j = 0; j < 400; j++) {
      assertEquals(whole.count(j), chunked.count(j), "size of cluster " + j);
    }
    // sums of the same rows in other chunkings: equal within rounding (at most 1024 terms of size <= 30)
    assertEquals(whole.wcss(0), chunked.wcss(0), 1e-9 * whole.wcss(0));
  }
}
