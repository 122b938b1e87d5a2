package io.eigenmill.monitor.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;

/**
 * {@link TimeBuckets} against a brute-force computation in the test: a sorted map from floor(t / 2^j) to the
 * maxima of the rows in it, its row count and its counts of rows above a limit of a and of b, for the level the
 * summary reports, and the smallest level at which the rows fit in the wanted number of buckets. Maxima are exact
 * (no arithmetic) and counts are integers, so every comparison is exact.
 */
class TimeBucketsTest {

  /** Rows (seconds, a, b): bursts of activity at irregular times, negative times included. */
  private static long[][] times(long seed, int n) {
    SplittableRandom r = new SplittableRandom(seed);
    long[][] rows = new long[n][];
    long t = -50_000;
    for (int i = 0; i < n; i++) {
      t += r.nextInt(10) < 8 ? r.nextInt(5) : r.nextInt(4000);
      rows[i] = new long[] {t, r.nextLong()};
    }
    return rows;
  }

  private static double a(long[] row) {
    return (row[1] & 0xffff) / 7.0;
  }

  private static double b(long[] row) {
    return ((row[1] >>> 16) & 0xffff) / 3.0;
  }

  /** Limits of a and b for the counts: above them are about 15% and 8% of the rows. */
  private static final double A_LIMIT = 8000;
  private static final double B_LIMIT = 20000;

  /** Brute force: per bucket of width 2^level, the maxima of a and b, rows, rows above A_LIMIT and B_LIMIT. */
  private static TreeMap<Long, double[]> bruteForce(List<long[]> rows, int level) {
    TreeMap<Long, double[]> out = new TreeMap<>();
    long w = 1L << level;
    for (long[] row : rows) {
      long start = Math.floorDiv(row[0], w) * w;
      double[] m = out.computeIfAbsent(start, s -> new double[] {Double.NEGATIVE_INFINITY, Double.NEGATIVE_INFINITY,
          0, 0, 0});
      m[0] = Math.max(m[0], a(row));
      m[1] = Math.max(m[1], b(row));
      m[2]++;
      m[3] += a(row) > A_LIMIT ? 1 : 0;
      m[4] += b(row) > B_LIMIT ? 1 : 0;
    }
    return out;
  }

  /** Brute force: the smallest level at which the rows occupy at most {@code points} buckets. */
  private static int smallestLevel(List<long[]> rows, int points) {
    int level = 0;
    while (bruteForce(rows, level).size() > points) {
      level++;
    }
    return level;
  }

  private static void assertMatches(TreeMap<Long, double[]> expected, TimeBuckets actual, String what) {
    TimeBuckets.Points p = actual.points();
    assertEquals(expected.size(), p.starts().length, what + ": bucket count");
    int i = 0;
    for (Map.Entry<Long, double[]> e : expected.entrySet()) {
      assertEquals(e.getKey(), p.starts()[i], what + ": start of bucket " + i);
      assertEquals(e.getValue()[0], p.maxA()[i], 0.0, what + ": max a of bucket " + i);
      assertEquals(e.getValue()[1], p.maxB()[i], 0.0, what + ": max b of bucket " + i);
      assertEquals((long) e.getValue()[2], p.rows()[i], what + ": rows of bucket " + i);
      assertEquals((long) e.getValue()[3], p.overA()[i], what + ": rows above the a limit in bucket " + i);
      assertEquals((long) e.getValue()[4], p.overB()[i], what + ": rows above the b limit in bucket " + i);
      i++;
    }
  }

  private static TimeBuckets summary(List<long[]> rows, int limit) {
    TimeBuckets s = new TimeBuckets(limit);
    for (long[] row : rows) {
      add(s, row);
    }
    return s;
  }

  private static void add(TimeBuckets s, long[] row) {
    s.add(row[0], a(row), b(row), a(row) > A_LIMIT, b(row) > B_LIMIT);
  }

  @Test
  void everyIntermediateStateHoldsTheExactMaximaOfItsLevel() {
    List<long[]> rows = List.of(times(1, 5000));
    TimeBuckets s = new TimeBuckets(40);
    List<long[]> seen = new ArrayList<>();
    for (int i = 0; i < rows.size(); i++) {
      long[] row = rows.get(i);
      add(s, row);
      seen.add(row);
      assertTrue(s.size() <= 40, "never more than the limit");
      if (i % 500 == 499) {
        assertMatches(bruteForce(seen, s.level()), s, "after " + (i + 1) + " rows");
      }
    }
    assertTrue(s.level() > 0, "the data must force coarsening");
    assertTrue(bruteForce(rows, s.level() - 1).size() > 40, "it coarsened only when the rows did not fit");
  }

  @Test
  void finalSummaryIsTheNarrowestGridThatFitsWhateverThePartitioning() {
    List<long[]> rows = List.of(times(2, 8000));
    int points = 30;
    int level = smallestLevel(rows, points);
    TreeMap<Long, double[]> expected = bruteForce(rows, level);
    for (int parts : new int[] {1, 2, 3, 7, 50}) {
      List<TimeBuckets> partials = new ArrayList<>();
      for (int p = 0; p < parts; p++) {
        List<long[]> slice = new ArrayList<>();
        // interleaved slices: every partition spans the whole time range (the hardest case for a grid)
        for (int i = p; i < rows.size(); i += parts) {
          slice.add(rows.get(i));
        }
        partials.add(summary(slice, 2 * points));
      }
      TimeBuckets merged = new TimeBuckets(2 * points);
      for (TimeBuckets t : partials) {
        merged.merge(t);
      }
      merged.coarsenToAtMost(points);
      assertEquals(level, merged.level(), parts + " partitions: level");
      assertMatches(expected, merged, parts + " partitions");
    }
  }

  @Test
  void mergeIsCommutativeAndAssociativeOnceCoarsened() {
    List<long[]> all = List.of(times(3, 6000));
    // three contiguous ranges of very different spans: the summaries reach different levels
    TimeBuckets x = summary(all.subList(0, 300), 40);
    TimeBuckets y = summary(all.subList(300, 3500), 40);
    TimeBuckets z = summary(all.subList(3500, 6000), 40);
    assertTrue(x.level() != z.level() || x.level() != y.level(), "the parts must sit at different levels");
    TimeBuckets xy = x.copy();
    xy.merge(y);
    TimeBuckets yx = y.copy();
    yx.merge(x);
    TimeBuckets xyThenZ = xy.copy();
    xyThenZ.merge(z);
    TimeBuckets yz = y.copy();
    yz.merge(z);
    TimeBuckets xThenYz = x.copy();
    xThenYz.merge(yz);
    TimeBuckets zyx = z.copy();
    zyx.merge(yx);
    for (TimeBuckets t : List.of(xy, yx)) {
      t.coarsenToAtMost(20);
    }
    assertEquals(xy.level(), yx.level(), "x + y = y + x: level");
    assertMatches(bruteForce(all.subList(0, 3500), xy.level()), yx, "y + x");
    int level = smallestLevel(all, 20);
    for (TimeBuckets t : List.of(xyThenZ, xThenYz, zyx)) {
      t.coarsenToAtMost(20);
      assertEquals(level, t.level(), "(x + y) + z = x + (y + z) = z + (y + x): level");
      assertMatches(bruteForce(all, level), t, "three-way merge");
    }
    // the merged parts are unchanged
    assertMatches(bruteForce(all.subList(300, 3500), y.level()), y, "y after merges");
  }

  @Test
  void anEmptySummaryIsNeutralAndASerializedOneKeepsWorking() throws Exception {
    List<long[]> rows = List.of(times(4, 2000));
    TimeBuckets s = summary(rows, 60);
    TimeBuckets e = new TimeBuckets(60);
    e.merge(s);
    assertMatches(bruteForce(rows, s.level()), e, "empty + s");
    s.merge(new TimeBuckets(60));
    assertMatches(bruteForce(rows, s.level()), s, "s + empty");
    // a summary travels from the executors serialized: its cache of the last bucket must survive
    java.io.ByteArrayOutputStream bytes = new java.io.ByteArrayOutputStream();
    try (java.io.ObjectOutputStream out = new java.io.ObjectOutputStream(bytes)) {
      out.writeObject(s);
    }
    TimeBuckets back;
    try (java.io.ObjectInputStream in = new java.io.ObjectInputStream(
        new java.io.ByteArrayInputStream(bytes.toByteArray()))) {
      back = (TimeBuckets) in.readObject();
    }
    List<long[]> more = new ArrayList<>(rows);
    for (long[] row : times(5, 500)) {
      add(back, row);
      more.add(row);
    }
    assertMatches(bruteForce(more, back.level()), back, "after deserialization");
  }

  @Test
  void widthAndStartsAreAlignedPowersOfTwo() {
    TimeBuckets s = new TimeBuckets(2);
    s.add(-3, 1, 1);
    s.add(5, 2, 2);
    s.add(9, 3, 3);
    // three one-second buckets exceed 2: level 1 (-4, 4, 8) still 3, level 2 (-4, 4, 8) 3, level 3 (-8, 0, 8) 3,
    // level 4 (-16, 0) 2
    assertEquals(4, s.level());
    TimeBuckets.Points p = s.points();
    assertEquals(16, p.width());
    assertArrayEquals(new long[] {-16, 0}, p.starts());
    assertArrayEquals(new double[] {1, 3}, p.maxA(), 0.0);
    assertArrayEquals(new long[] {1, 2}, p.rows(), "the three-argument add counts the row");
    assertArrayEquals(new long[] {0, 0}, p.overA(), "... above neither limit");
  }

  @Test
  void countsAddUpToTheRowsWhateverThePartitioning() {
    List<long[]> rows = List.of(times(6, 7000));
    long overA = rows.stream().filter(r -> a(r) > A_LIMIT).count();
    assertTrue(overA > 500 && overA < rows.size() - 500, "the a limit splits the rows: " + overA);
    for (int parts : new int[] {1, 4, 13}) {
      TimeBuckets merged = new TimeBuckets(50);
      for (int p = parts - 1; p >= 0; p--) {
        merged.merge(summary(rows.subList(p * rows.size() / parts, (p + 1) * rows.size() / parts), 50));
      }
      merged.coarsenToAtMost(25);
      TimeBuckets.Points pts = merged.points();
      assertEquals(rows.size(), java.util.Arrays.stream(pts.rows()).sum(), parts + " partitions: every row once");
      assertEquals(overA, java.util.Arrays.stream(pts.overA()).sum(), parts + " partitions: rows above a");
      assertMatches(bruteForce(rows, smallestLevel(rows, 25)), merged, parts + " contiguous partitions");
    }
  }
}
