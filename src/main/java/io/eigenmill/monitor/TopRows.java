package io.eigenmill.monitor;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.PriorityQueue;
import org.apache.spark.util.AccumulatorV2;

/**
 * The {@link #capacity} most severe rows of a scoring pass, collected on the executors without an extra pass:
 * each task keeps a bounded heap and hands it to this accumulator; merging keeps the top {@link #capacity}.
 * Severity is max(T2 / T2 limit, Q / Q limit); ties are broken by the key text so that the result does not depend
 * on the order in which tasks finish.
 */
public final class TopRows extends AccumulatorV2<TopRows.Candidate, List<TopRows.Candidate>> {
  private static final long serialVersionUID = 1L;

  /** A scored row worth reporting: its keys as text, its statistics, and feature indices/values of its Q drivers. */
  /** @param flagT2 above its T2 limit (the row's own: with groups, its group's); flagQ likewise for Q */
  public record Candidate(List<String> keys, double severity, double t2, double q, int[] topFeatures,
      double[] topContributions, boolean flagT2, boolean flagQ) implements Serializable {}

  static final Comparator<Candidate> ORDER = new BySeverity();

  /** Ascending severity; equal severities by descending key text. Serializable: it travels inside the heap. */
  static final class BySeverity implements Comparator<Candidate>, Serializable {
    private static final long serialVersionUID = 1L;

    @Override
    public int compare(Candidate a, Candidate b) {
      int c = Double.compare(a.severity(), b.severity());
      return c != 0 ? c : String.join("\u0001", b.keys()).compareTo(String.join("\u0001", a.keys()));
    }
  }

  private final int capacity;
  private final PriorityQueue<Candidate> heap;

  public TopRows(int capacity) {
    this.capacity = capacity;
    this.heap = new PriorityQueue<>(ORDER);
  }

  public int capacity() {
    return capacity;
  }

  /** The smallest severity that would still enter a full heap (0 while it is not full). */
  public double threshold() {
    return heap.size() < capacity ? 0.0 : heap.peek().severity();
  }

  @Override public boolean isZero() {
    return heap.isEmpty();
  }

  @Override public AccumulatorV2<Candidate, List<Candidate>> copy() {
    TopRows c = new TopRows(capacity);
    c.heap.addAll(heap);
    return c;
  }

  @Override public void reset() {
    heap.clear();
  }

  @Override public void add(Candidate v) {
    heap.add(v);
    if (heap.size() > capacity) {
      heap.poll();
    }
  }

  @Override public void merge(AccumulatorV2<Candidate, List<Candidate>> other) {
    for (Candidate c : other.value()) {
      add(c);
    }
  }

  /** Most severe first. */
  @Override public List<Candidate> value() {
    List<Candidate> out = new ArrayList<>(heap);
    out.sort(ORDER.reversed());
    return out;
  }
}
