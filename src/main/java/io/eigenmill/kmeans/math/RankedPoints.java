package io.eigenmill.kmeans.math;

import java.io.Serializable;
import java.nio.ByteBuffer;
import java.util.Arrays;

/**
 * The (at most) {@code capacity} points of smallest rank seen so far, with ties on the rank broken by a 64-bit
 * identity: a bounded, mergeable selection. The kept set depends only on the (rank, identity, point) triples offered,
 * never on the order of the offers, so a selection over partitions merged in any tree is the same as over the whole
 * data. Uses: the seeded bottom-s sample of the silhouette (rank = a unit random number of the point), the first
 * centre of each k-means|| run (capacity 1), and the points farthest from their centroids (rank = -distance^2), which
 * re-seed empty clusters.
 *
 * <p>A binary max-heap of slot indices: the worst kept entry is at the root, so a rejected offer costs one
 * comparison; an accepted one O(log capacity + d). Memory: at most capacity x (d + 2) words, grown by doubling as
 * entries arrive (a large selection over a small partition stays small, and so does its serialized form).
 */
public final class RankedPoints implements Serializable {
  private static final long serialVersionUID = 1L;

  private final int capacity;
  private final int d;
  /** Slots allocated before the first growth. */
  private static final int FIRST_SLOTS = 16;

  private double[] rank;
  private long[] tie;
  private double[] values;
  private int[] heap;
  private int size;
  /** The worst kept rank once full (every offer ranked after it is refused), +infinity before. */
  private double refusal = Double.POSITIVE_INFINITY;

  public RankedPoints(int capacity, int d) {
    if (capacity < 1) {
      throw new IllegalArgumentException("capacity must be at least 1, got " + capacity);
    }
    this.capacity = capacity;
    this.d = d;
    int slots = Math.min(capacity, FIRST_SLOTS);
    this.rank = new double[slots];
    this.tie = new long[slots];
    this.values = new double[slots * d];
    this.heap = new int[slots];
  }

  /** Room for one more entry below capacity: doubles the slots (up to capacity) when they are all used. */
  private void ensureSlot() {
    if (size < rank.length) {
      return;
    }
    int slots = (int) Math.min(capacity, 2L * rank.length);
    rank = Arrays.copyOf(rank, slots);
    tie = Arrays.copyOf(tie, slots);
    values = Arrays.copyOf(values, slots * d);
    heap = Arrays.copyOf(heap, slots);
  }

  public int size() {
    return size;
  }

  public int capacity() {
    return capacity;
  }

  public int dimension() {
    return d;
  }

  /** True when (r1, t1) ranks after (r2, t2). */
  private static boolean after(double r1, long t1, double r2, long t2) {
    return r1 > r2 || (r1 == r2 && t1 > t2);
  }

  /**
   * Offers the point whose coordinate l is {@code src[off + l * stride]}. Returns true when it was kept. When the
   * selection is full, an offer tied in rank and identity with the worst kept entry is refused: equal identities
   * mean equal points (duplicate rows), so which of them is kept does not change the result.
   *
   * <p>Most offers of a per-row loop are refused: a refusal costs one comparison with a field. Hot loops should
   * still compare with {@link #refusalRank} themselves and call this only at or below it: once this method is
   * compiled on its own (with {@link #keep} inside), the JIT may no longer inline it into a loop, and a call per row
   * then cost a third of a Lloyd pass (measured).
   */
  public boolean offer(double r, long t, double[] src, int off, int stride) {
    if (r > refusal) {
      return false;
    }
    if (size == capacity) {
      int root = heap[0];
      if (!after(rank[root], tie[root], r, t)) {
        return false;
      }
    }
    keep(r, t, src, off, stride);
    return true;
  }

  /**
   * A rank above which every offer is refused: the worst kept rank once full, +infinity before. Read it again after
   * an offer is kept.
   */
  public double refusalRank() {
    return refusal;
  }

  private void keep(double r, long t, double[] src, int off, int stride) {
    if (size < capacity) {
      ensureSlot();
      int slot = size;
      heap[size] = slot;
      store(slot, r, t, src, off, stride);
      siftUp(size++);
    } else {
      store(heap[0], r, t, src, off, stride);
      siftDown(0);
    }
    if (size == capacity) {
      refusal = rank[heap[0]];
    }
  }

  private void store(int slot, double r, long t, double[] src, int off, int stride) {
    rank[slot] = r;
    tie[slot] = t;
    int base = slot * d;
    for (int l = 0; l < d; l++) {
      values[base + l] = src[off + l * stride];
    }
  }

  private boolean worse(int a, int b) {
    return after(rank[heap[a]], tie[heap[a]], rank[heap[b]], tie[heap[b]]);
  }

  private void siftUp(int i) {
    while (i > 0) {
      int parent = (i - 1) >>> 1;
      if (!worse(i, parent)) {
        return;
      }
      swap(i, parent);
      i = parent;
    }
  }

  private void siftDown(int i) {
    while (true) {
      int left = 2 * i + 1;
      if (left >= size) {
        return;
      }
      int worst = left + 1 < size && worse(left + 1, left) ? left + 1 : left;
      if (!worse(worst, i)) {
        return;
      }
      swap(i, worst);
      i = worst;
    }
  }

  private void swap(int a, int b) {
    int t = heap[a];
    heap[a] = heap[b];
    heap[b] = t;
  }

  /** Offers every entry of {@code other} to this selection; returns this. {@code other} is unchanged. */
  public RankedPoints merge(RankedPoints other) {
    if (other.d != d) {
      throw new IllegalArgumentException("cannot merge points of dimension " + other.d + " into dimension " + d);
    }
    for (int s = 0; s < other.size; s++) {
      int slot = other.heap[s];
      offer(other.rank[slot], other.tie[slot], other.values, slot * d, 1);
    }
    return this;
  }

  /** Slots of the kept entries, best (smallest rank, then identity) first. */
  private int[] ascendingSlots() {
    Integer[] order = new Integer[size];
    for (int s = 0; s < size; s++) {
      order[s] = heap[s];
    }
    Arrays.sort(order, (a, b) -> after(rank[a], tie[a], rank[b], tie[b]) ? 1
        : after(rank[b], tie[b], rank[a], tie[a]) ? -1 : 0);
    int[] out = new int[size];
    for (int s = 0; s < size; s++) {
      out[s] = order[s];
    }
    return out;
  }

  /** The kept points, best first, point-major ({@code size() x d}). */
  public double[] points() {
    int[] slots = ascendingSlots();
    double[] out = new double[size * d];
    for (int s = 0; s < slots.length; s++) {
      System.arraycopy(values, slots[s] * d, out, s * d, d);
    }
    return out;
  }

  /** The kept ranks, best first. */
  public double[] ranks() {
    int[] slots = ascendingSlots();
    double[] out = new double[size];
    for (int s = 0; s < slots.length; s++) {
      out[s] = rank[slots[s]];
    }
    return out;
  }

  /** The kept identities, best first. */
  public long[] identities() {
    int[] slots = ascendingSlots();
    long[] out = new long[size];
    for (int s = 0; s < slots.length; s++) {
      out[s] = tie[slots[s]];
    }
    return out;
  }

  /** The serialized form: capacity, d, size, then (rank, identity, point) of each kept entry, best first. */
  public byte[] toBytes() {
    int[] slots = ascendingSlots();
    ByteBuffer buf = ByteBuffer.allocate(12 + size * (16 + 8 * d));
    buf.putInt(capacity).putInt(d).putInt(size);
    for (int slot : slots) {
      buf.putDouble(rank[slot]).putLong(tie[slot]);
      for (int l = 0; l < d; l++) {
        buf.putDouble(values[slot * d + l]);
      }
    }
    return buf.array();
  }

  public static RankedPoints fromBytes(byte[] bytes) {
    ByteBuffer buf = ByteBuffer.wrap(bytes);
    RankedPoints p = new RankedPoints(buf.getInt(), buf.getInt());
    int n = buf.getInt();
    double[] point = new double[p.d];
    for (int s = 0; s < n; s++) {
      double r = buf.getDouble();
      long t = buf.getLong();
      for (int l = 0; l < p.d; l++) {
        point[l] = buf.getDouble();
      }
      p.offer(r, t, point, 0, 1);
    }
    return p;
  }
}
