package io.eigenmill.monitor.math;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.PriorityQueue;

/**
 * A bottom-s sample: the {@code capacity} entries of smallest rank, where the rank of a row is a seeded hash of
 * what identifies it (its keys), with a second hash (of its values) to order rows whose first hashes are equal. The
 * rank is a function of the row alone, so the sample is the same set whatever the partitioning, row order and merge
 * order: merging two samples keeps the {@code capacity} smallest of their union. (Bottom-k sketches: Cohen and
 * Kaplan 2007, "Summarizing data using bottom-k sketches", PODC.)
 *
 * <p>Entries of equal (rank, tie) are kept as a multiset: they come from rows with the same keys and values. A
 * caller checks {@link #admits} before building a payload, so rows that cannot enter cost one comparison.
 *
 * @param <T> what an entry carries (the caller's payload)
 */
public final class HashSample<T extends Serializable> implements Serializable {
  private static final long serialVersionUID = 1L;

  /** One sampled row. */
  public record Entry<T>(long rank, long tie, T value) implements Serializable {}

  /** Ascending rank, then ascending tie. */
  static final class ByRank implements Comparator<Entry<?>>, Serializable {
    private static final long serialVersionUID = 1L;

    @Override
    public int compare(Entry<?> a, Entry<?> b) {
      int c = Long.compare(a.rank(), b.rank());
      return c != 0 ? c : Long.compare(a.tie(), b.tie());
    }
  }

  private static final ByRank ORDER = new ByRank();

  private final int capacity;
  /** The kept entries, largest rank on top (the first to leave). */
  private final PriorityQueue<Entry<T>> heap;

  public HashSample(int capacity) {
    if (capacity < 0) {
      throw new IllegalArgumentException("capacity must not be negative: " + capacity);
    }
    this.capacity = capacity;
    this.heap = new PriorityQueue<>(ORDER.reversed());
  }

  public int capacity() {
    return capacity;
  }

  public int size() {
    return heap.size();
  }

  public boolean isEmpty() {
    return heap.isEmpty();
  }

  /**
   * Whether a row of first hash {@code rank} may enter: false when the sample is full and every kept entry ranks
   * below it. True does not promise entry (the tie decides on equal ranks).
   */
  public boolean admits(long rank) {
    if (heap.size() < capacity) {
      return true;
    }
    return capacity > 0 && rank <= heap.peek().rank();
  }

  /** Offers a row; it stays when it is among the {@code capacity} smallest (rank, tie) seen. */
  public void offer(long rank, long tie, T value) {
    offer(new Entry<>(rank, tie, value));
  }

  private void offer(Entry<T> e) {
    if (capacity == 0) {
      return;
    }
    if (heap.size() < capacity) {
      heap.add(e);
    } else if (ORDER.compare(e, heap.peek()) < 0) {
      heap.poll();
      heap.add(e);
    }
  }

  /** Keeps the {@code capacity} smallest of this sample and {@code other} (other is unchanged). */
  public void merge(HashSample<T> other) {
    for (Entry<T> e : other.heap) {
      offer(e);
    }
  }

  public HashSample<T> copy() {
    HashSample<T> c = new HashSample<>(capacity);
    c.heap.addAll(heap);
    return c;
  }

  public void clear() {
    heap.clear();
  }

  /** The kept entries, smallest rank first. */
  public List<Entry<T>> entries() {
    List<Entry<T>> out = new ArrayList<>(heap);
    out.sort(ORDER);
    return out;
  }
}
