package io.eigenmill.monitor.math;

import io.eigenmill.math.SeedStream;
import java.io.Serializable;
import java.util.Arrays;

/**
 * The maxima of two statistics (T2 and Q) per time bucket, the bucket's row count and the counts of its rows above
 * each statistic's limit, gathered in one pass over rows whose time range is not known in advance, and mergeable
 * across partitions.
 *
 * <p>Buckets lie on a fixed grid: at level j a bucket is {@code [b 2^j, (b + 1) 2^j)} seconds, b = floor(t / 2^j)
 * (an arithmetic shift). A summary starts at level 0 (one-second buckets); when it holds more than {@code limit}
 * buckets it doubles the width (level j + 1) and merges pairs of buckets, as many times as needed. Merging two
 * summaries first coarsens both to the larger level. {@link #coarsenTo(int)} to at most {@code points} buckets then
 * gives the same result whatever the partitioning and merge order, provided {@code points <= limit}: a summary only
 * leaves level j when a subset of the rows already fills more than {@code limit >= points} buckets at level j, so
 * the whole table needs a level above j too; and the final level is the smallest one at which the whole table fits
 * in {@code points} buckets, each holding the exact maximum of its rows (maxima merge exactly) and the exact counts
 * (integer sums, in any order).
 *
 * <p>Storage: an open-addressing table of bucket numbers with a capacity of at least {@code 2 (limit + 1)} slots
 * (load <= 1/2), each holding a key, two maxima and three counts; adding a row is one probe in the common case, no
 * allocation. Maxima follow {@link Math#max}, so a
 * NaN statistic makes its bucket's maximum NaN (as SQL's {@code max}, which orders NaN above every number).
 */
public final class TimeBuckets implements Serializable {
  private static final long serialVersionUID = 1L;
  /** The largest level: buckets of 2^62 s cover every long. */
  static final int MAX_LEVEL = 62;

  private final int limit;
  private int level;
  private int size;
  private long[] keys;
  private boolean[] used;
  private double[] maxA;
  private double[] maxB;
  private long[] rows;
  private long[] overA;
  private long[] overB;
  /** The slot of the last bucket touched (rows often come in time order), or -1. */
  private int lastSlot = -1;
  private long lastKey;

  /** An empty summary at level 0 that coarsens whenever it holds more than {@code limit} buckets. */
  public TimeBuckets(int limit) {
    if (limit < 1) {
      throw new IllegalArgumentException("limit must be positive: " + limit);
    }
    this.limit = limit;
    allocate(capacityFor(limit));
  }

  private static int capacityFor(int limit) {
    int c = 16;
    while (c < 2 * (limit + 1)) {
      c <<= 1;
    }
    return c;
  }

  private void allocate(int capacity) {
    keys = new long[capacity];
    used = new boolean[capacity];
    maxA = new double[capacity];
    maxB = new double[capacity];
    rows = new long[capacity];
    overA = new long[capacity];
    overB = new long[capacity];
    size = 0;
    lastSlot = -1;
  }

  public int limit() {
    return limit;
  }

  /** The current level j: buckets are 2^j seconds wide. */
  public int level() {
    return level;
  }

  /** The current bucket width in seconds. */
  public long width() {
    return 1L << level;
  }

  /** Buckets held. */
  public int size() {
    return size;
  }

  public boolean isEmpty() {
    return size == 0;
  }

  /** Adds a row at {@code seconds} with statistics {@code a} and {@code b}, above neither limit. */
  public void add(long seconds, double a, double b) {
    add(seconds, a, b, false, false);
  }

  /**
   * Adds a row at {@code seconds} with statistics {@code a} and {@code b}; {@code aOver}, {@code bOver}: whether the
   * row is above the limit of a, of b (counted per bucket).
   */
  public void add(long seconds, double a, double b, boolean aOver, boolean bOver) {
    long key = seconds >> level;
    int slot;
    if (lastSlot >= 0 && key == lastKey) {
      slot = lastSlot;
    } else {
      slot = slotOf(key);
      if (!used[slot]) {
        insert(slot, key, a, b, 1, aOver ? 1 : 0, bOver ? 1 : 0);
        if (size > limit) {
          coarsenUntilFits();
        }
        return;
      }
      lastSlot = slot;
      lastKey = key;
    }
    maxA[slot] = Math.max(maxA[slot], a);
    maxB[slot] = Math.max(maxB[slot], b);
    rows[slot]++;
    overA[slot] += aOver ? 1 : 0;
    overB[slot] += bOver ? 1 : 0;
  }

  /** The slot holding {@code key}, or the free slot where it belongs. */
  private int slotOf(long key) {
    int mask = keys.length - 1;
    int slot = (int) SeedStream.mix(key) & mask;
    while (used[slot] && keys[slot] != key) {
      slot = (slot + 1) & mask;
    }
    return slot;
  }

  private void insert(int slot, long key, double a, double b, long n, long na, long nb) {
    used[slot] = true;
    keys[slot] = key;
    maxA[slot] = a;
    maxB[slot] = b;
    rows[slot] = n;
    overA[slot] = na;
    overB[slot] = nb;
    size++;
    lastSlot = slot;
    lastKey = key;
  }

  /**
   * Puts bucket {@code key} (at the current level) with maxima a, b and counts n, na, nb, merging with a bucket
   * already there.
   */
  private void put(long key, double a, double b, long n, long na, long nb) {
    int slot = slotOf(key);
    if (used[slot]) {
      maxA[slot] = Math.max(maxA[slot], a);
      maxB[slot] = Math.max(maxB[slot], b);
      rows[slot] += n;
      overA[slot] += na;
      overB[slot] += nb;
    } else {
      insert(slot, key, a, b, n, na, nb);
    }
  }

  private void coarsenUntilFits() {
    while (size > limit) {
      coarsenTo(level + 1);
    }
  }

  /** Re-buckets at {@code target} (no change when the summary is already at that level or coarser). */
  public void coarsenTo(int target) {
    if (target <= level) {
      return;
    }
    if (target > MAX_LEVEL) {
      throw new IllegalArgumentException("level " + target + " exceeds " + MAX_LEVEL);
    }
    int shift = target - level;
    long[] oldKeys = keys;
    boolean[] oldUsed = used;
    double[] oldA = maxA;
    double[] oldB = maxB;
    long[] oldRows = rows;
    long[] oldOverA = overA;
    long[] oldOverB = overB;
    allocate(oldKeys.length);
    level = target;
    for (int s = 0; s < oldKeys.length; s++) {
      if (oldUsed[s]) {
        put(oldKeys[s] >> shift, oldA[s], oldB[s], oldRows[s], oldOverA[s], oldOverB[s]);
      }
    }
  }

  /** Coarsens until at most {@code points} buckets remain (the result does not depend on the partitioning). */
  public void coarsenToAtMost(int points) {
    if (points < 1) {
      throw new IllegalArgumentException("points must be positive: " + points);
    }
    while (size > points) {
      coarsenTo(level + 1);
    }
  }

  /** Merges {@code other} into this summary (both at the larger of the two levels first; other is unchanged). */
  public void merge(TimeBuckets other) {
    coarsenTo(other.level);
    int shift = level - other.level;
    for (int s = 0; s < other.keys.length; s++) {
      if (other.used[s]) {
        put(other.keys[s] >> shift, other.maxA[s], other.maxB[s], other.rows[s], other.overA[s], other.overB[s]);
        if (size > limit) {
          coarsenTo(level + 1);
          shift++;
        }
      }
    }
  }

  /** A deep copy. */
  public TimeBuckets copy() {
    TimeBuckets c = new TimeBuckets(limit);
    c.level = level;
    c.size = size;
    c.keys = keys.clone();
    c.used = used.clone();
    c.maxA = maxA.clone();
    c.maxB = maxB.clone();
    c.rows = rows.clone();
    c.overA = overA.clone();
    c.overB = overB.clone();
    return c;
  }

  /** Empties the summary and returns it to level 0. */
  public void clear() {
    level = 0;
    allocate(capacityFor(limit));
  }

  /**
   * The buckets in time order: start in seconds, maximum of the first and of the second statistic, rows, rows above
   * the first and the second statistic's limit.
   */
  public Points points() {
    long[] starts = new long[size];
    int n = 0;
    for (int s = 0; s < keys.length; s++) {
      if (used[s]) {
        starts[n++] = keys[s];
      }
    }
    Arrays.sort(starts);
    double[] a = new double[size];
    double[] b = new double[size];
    long[] r = new long[size];
    long[] ra = new long[size];
    long[] rb = new long[size];
    for (int i = 0; i < size; i++) {
      int slot = slotOf(starts[i]);
      a[i] = maxA[slot];
      b[i] = maxB[slot];
      r[i] = rows[slot];
      ra[i] = overA[slot];
      rb[i] = overB[slot];
      starts[i] = starts[i] << level;
    }
    return new Points(width(), starts, a, b, r, ra, rb);
  }

  /**
   * Buckets of {@code width} seconds starting at {@code starts}, ascending: maxima, rows, and rows above the limit
   * of the first ({@code overA}) and of the second statistic ({@code overB}).
   */
  public record Points(long width, long[] starts, double[] maxA, double[] maxB, long[] rows, long[] overA,
      long[] overB) {}
}
