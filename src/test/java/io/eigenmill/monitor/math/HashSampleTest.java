package io.eigenmill.monitor.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * {@link HashSample} against a brute-force computation in the test: sort every (rank, tie) offered and keep the
 * first s. Ranks are drawn with many collisions (a few hundred distinct values) so that ties decide often.
 */
class HashSampleTest {

  private static List<long[]> offers(long seed, int n) {
    SplittableRandom r = new SplittableRandom(seed);
    List<long[]> out = new ArrayList<>();
    for (int i = 0; i < n; i++) {
      out.add(new long[] {r.nextInt(300) - 150, r.nextLong(), i});
    }
    return out;
  }

  private static HashSample<Long> sample(List<long[]> offers, int s) {
    HashSample<Long> h = new HashSample<>(s);
    for (long[] o : offers) {
      if (h.admits(o[0])) {
        h.offer(o[0], o[1], o[2]);
      }
    }
    return h;
  }

  private static List<Long> bruteForce(List<long[]> offers, int s) {
    return offers.stream().sorted(Comparator.<long[]>comparingLong(o -> o[0]).thenComparingLong(o -> o[1]))
        .limit(s).map(o -> o[2]).toList();
  }

  private static List<Long> values(HashSample<Long> h) {
    return h.entries().stream().map(HashSample.Entry::value).toList();
  }

  @Test
  void keepsTheSmallestRanksInRankOrder() {
    List<long[]> all = offers(1, 5000);
    assertEquals(bruteForce(all, 64), values(sample(all, 64)));
    assertEquals(bruteForce(all, 5000), values(sample(all, 10_000)), "not full: everything, sorted");
    assertTrue(sample(all, 0).isEmpty(), "capacity 0 keeps nothing");
  }

  @Test
  void mergeIsCommutativeAndAssociative() {
    List<long[]> all = offers(2, 3000);
    HashSample<Long> x = sample(all.subList(0, 100), 50);
    HashSample<Long> y = sample(all.subList(100, 1800), 50);
    HashSample<Long> z = sample(all.subList(1800, 3000), 50);
    HashSample<Long> xy = x.copy();
    xy.merge(y);
    HashSample<Long> yx = y.copy();
    yx.merge(x);
    assertEquals(values(xy), values(yx), "x + y = y + x");
    assertEquals(bruteForce(all.subList(0, 1800), 50), values(xy));
    HashSample<Long> xyThenZ = xy.copy();
    xyThenZ.merge(z);
    HashSample<Long> yz = y.copy();
    yz.merge(z);
    HashSample<Long> xThenYz = x.copy();
    xThenYz.merge(yz);
    assertEquals(values(xyThenZ), values(xThenYz), "(x + y) + z = x + (y + z)");
    assertEquals(bruteForce(all, 50), values(xyThenZ));
    assertEquals(bruteForce(all.subList(0, 100), 50), values(x), "merging leaves the merged sample unchanged");
  }

  @Test
  void samePartitionedAnyWay() {
    List<long[]> all = offers(3, 4000);
    List<Long> expected = bruteForce(all, 100);
    for (int parts : new int[] {1, 3, 17}) {
      HashSample<Long> merged = new HashSample<>(100);
      for (int p = parts - 1; p >= 0; p--) {
        List<long[]> slice = new ArrayList<>();
        for (int i = p; i < all.size(); i += parts) {
          slice.add(all.get(i));
        }
        merged.merge(sample(slice, 100));
      }
      assertEquals(expected, values(merged), parts + " partitions");
    }
  }

  @Test
  void admitsOnlyRanksThatCanEnter() {
    HashSample<Long> h = new HashSample<>(2);
    h.offer(5, 0, 1L);
    h.offer(7, 0, 2L);
    assertTrue(h.admits(7), "equal rank: the tie decides");
    assertFalse(h.admits(8));
    h.offer(7, -1, 3L);
    assertEquals(List.of(1L, 3L), values(h), "equal rank, smaller tie replaces");
  }
}
