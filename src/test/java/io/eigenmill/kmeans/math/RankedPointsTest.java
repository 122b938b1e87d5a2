package io.eigenmill.kmeans.math;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.Arrays;
import java.util.Comparator;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/** The bounded selection against a full sort of every offer (the brute force), and its merge laws. */
class RankedPointsTest {
  static final int N = 500;
  static final int D = 2;

  final double[] rank = new double[N];
  final long[] id = new long[N];
  final double[] pts = new double[N * D];

  RankedPointsTest() {
    SplittableRandom rnd = new SplittableRandom(5);
    for (int i = 0; i < N; i++) {
      rank[i] = rnd.nextInt(50); // many ties on the rank, broken by the identity
      id[i] = rnd.nextLong();
      pts[i * D] = i;
      pts[i * D + 1] = -i;
    }
  }

  RankedPoints offer(int from, int to, int capacity) {
    RankedPoints p = new RankedPoints(capacity, D);
    for (int i = from; i < to; i++) {
      p.offer(rank[i], id[i], pts, i * D, 1);
    }
    return p;
  }

  long[] expected(int capacity) {
    Integer[] order = new Integer[N];
    for (int i = 0; i < N; i++) {
      order[i] = i;
    }
    Arrays.sort(order, Comparator.<Integer>comparingDouble(i -> rank[i]).thenComparingLong(i -> id[i]));
    long[] out = new long[capacity];
    for (int i = 0; i < capacity; i++) {
      out[i] = id[order[i]];
    }
    return out;
  }

  @Test
  void keepsTheSmallestRanksWithTheirPoints() {
    RankedPoints p = offer(0, N, 37);
    assertArrayEquals(expected(37), p.identities());
    double[] kept = p.points();
    long[] ids = p.identities();
    for (int s = 0; s < ids.length; s++) {
      int i = indexOf(ids[s]);
      assertEquals(pts[i * D], kept[s * D], 0.0, "point travels with its identity");
      assertEquals(pts[i * D + 1], kept[s * D + 1], 0.0);
    }
  }

  @Test
  void mergeOfPartsEqualsTheWholeInAnyOrder() {
    long[] whole = offer(0, N, 20).identities();
    RankedPoints a = offer(0, 123, 20);
    RankedPoints b = offer(123, 400, 20);
    RankedPoints c = offer(400, N, 20);
    assertArrayEquals(whole, a.merge(b).merge(c).identities());
    assertArrayEquals(whole, offer(400, N, 20).merge(offer(0, 123, 20)).merge(offer(123, 400, 20)).identities());
  }

  @Test
  void mergeWithAnEmptySideIsTheIdentity() {
    long[] whole = offer(0, N, 20).identities();
    assertArrayEquals(whole, offer(0, N, 20).merge(new RankedPoints(20, D)).identities());
    assertArrayEquals(whole, new RankedPoints(20, D).merge(offer(0, N, 20)).identities());
    assertEquals(0, new RankedPoints(3, D).merge(new RankedPoints(3, D)).size());
  }

  @Test
  void bytesRoundTrip() {
    RankedPoints p = offer(0, N, 15);
    RankedPoints q = RankedPoints.fromBytes(p.toBytes());
    assertArrayEquals(p.identities(), q.identities());
    assertArrayEquals(p.ranks(), q.ranks(), 0.0);
    assertArrayEquals(p.points(), q.points(), 0.0);
  }

  private int indexOf(long v) {
    for (int i = 0; i < N; i++) {
      if (id[i] == v) {
        return i;
      }
    }
    throw new AssertionError("unknown identity " + v);
  }

  /**
   * The refusal rank against the brute force: +infinity until the selection is full, then the largest kept rank;
   * an offer ranked above it is refused, and skipping such offers (as the per-row loops do) keeps the same set.
   */
  @org.junit.jupiter.api.Test
  void theRefusalRankIsTheWorstKeptRankOnceFullAndSkippingAboveItChangesNothing() {
    int capacity = 20;
    RankedPoints all = new RankedPoints(capacity, D);
    RankedPoints skipping = new RankedPoints(capacity, D);
    for (int i = 0; i < N; i++) {
      double before = all.refusalRank();
      boolean kept = all.offer(rank[i], id[i], pts, i * D, 1);
      if (rank[i] > before) {
        assertEquals(false, kept, "offer " + i + " ranked above the refusal rank was kept");
      }
      if (rank[i] <= skipping.refusalRank()) {
        skipping.offer(rank[i], id[i], pts, i * D, 1);
      }
      double[] ranks = all.ranks();
      assertEquals(ranks.length < capacity ? Double.POSITIVE_INFINITY : ranks[ranks.length - 1],
          all.refusalRank(), "after offer " + i);
    }
    assertArrayEquals(all.identities(), skipping.identities());
    assertArrayEquals(expected(capacity), all.identities());
  }
}
