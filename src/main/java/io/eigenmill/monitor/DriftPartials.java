package io.eigenmill.monitor;

import io.eigenmill.monitor.math.DriftMoments;
import java.util.Map;
import java.util.TreeMap;
import org.apache.spark.util.AccumulatorV2;

/**
 * The {@link DriftMoments} of a scoring pass, gathered partition by partition and merged in partition order, so
 * that the same input and partitioning give the same numbers bit for bit whatever order the tasks finish in. A task
 * adds its partition's moments once ({@link #addPartition}); the driver folds each partial into the merged prefix as
 * soon as every lower partition has arrived and keeps the others aside meanwhile (about as many as tasks run at once,
 * each {@code 2 (2d + k)} doubles).
 */
public final class DriftPartials extends AccumulatorV2<DriftMoments, DriftMoments> {
  private static final long serialVersionUID = 1L;

  private final int d;
  private final int k;
  /** Partitions 0..next-1 merged in order. */
  private DriftMoments prefix;
  private int next;
  /** Partials of partitions above a missing one, by partition. */
  private final TreeMap<Integer, DriftMoments> waiting = new TreeMap<>();

  public DriftPartials(int d, int k) {
    this.d = d;
    this.k = k;
    this.prefix = new DriftMoments(d, k);
  }

  /** One partition's moments (the executor path): kept aside until the driver merges the task's copy. */
  void addPartition(int partition, DriftMoments moments) {
    waiting.merge(partition, moments.copy(), DriftMoments::merge);
  }

  private void fold() {
    while (!waiting.isEmpty() && waiting.firstKey() == next) {
      prefix.merge(waiting.pollFirstEntry().getValue());
      next++;
    }
  }

  @Override
  public boolean isZero() {
    return next == 0 && waiting.isEmpty() && prefix.rows() == 0;
  }

  @Override
  public AccumulatorV2<DriftMoments, DriftMoments> copy() {
    DriftPartials c = new DriftPartials(d, k);
    c.prefix = prefix.copy();
    c.next = next;
    waiting.forEach((p, m) -> c.waiting.put(p, m.copy()));
    return c;
  }

  @Override
  public void reset() {
    prefix = new DriftMoments(d, k);
    next = 0;
    waiting.clear();
  }

  /** Not used: partitions add whole moments through {@link #addPartition}. */
  @Override
  public void add(DriftMoments v) {
    throw new UnsupportedOperationException("use addPartition");
  }

  @Override
  public void merge(AccumulatorV2<DriftMoments, DriftMoments> other) {
    DriftPartials o = (DriftPartials) other;
    if (o.next > 0) {
      // a task's copy holds its partition aside with an empty prefix; a merged prefix comes only from a copy of a
      // driver-side value and is taken as one unit in the place of partition 0
      waiting.merge(0, o.prefix.copy(), DriftMoments::merge);
    }
    for (Map.Entry<Integer, DriftMoments> e : o.waiting.entrySet()) {
      waiting.merge(e.getKey(), e.getValue().copy(), DriftMoments::merge);
    }
    fold();
  }

  /** The moments of every partition received, merged in partition order (a missing partition is skipped). */
  @Override
  public DriftMoments value() {
    DriftMoments out = prefix.copy();
    for (DriftMoments m : waiting.values()) {
      out.merge(m);
    }
    return out;
  }
}
