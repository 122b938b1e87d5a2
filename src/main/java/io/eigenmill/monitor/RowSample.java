package io.eigenmill.monitor;

import io.eigenmill.monitor.math.HashSample;
import java.io.Serializable;
import org.apache.spark.util.AccumulatorV2;

/**
 * A bottom-s sample of scored rows by a seeded hash of their keys ({@link HashSample}), gathered during a scoring
 * pass: each task adds its partition's sample once, when its rows are exhausted; merging keeps the s smallest ranks.
 * The result does not depend on the partitioning or on the order in which tasks finish. Updates of failed task
 * attempts are not merged (the write's result stage), so retries do not count twice.
 */
public final class RowSample<T extends Serializable> extends AccumulatorV2<HashSample<T>, HashSample<T>> {
  private static final long serialVersionUID = 1L;

  private final HashSample<T> sample;

  public RowSample(int capacity) {
    this.sample = new HashSample<>(capacity);
  }

  int capacity() {
    return sample.capacity();
  }

  @Override public boolean isZero() {
    return sample.isEmpty();
  }

  @Override public AccumulatorV2<HashSample<T>, HashSample<T>> copy() {
    RowSample<T> c = new RowSample<>(sample.capacity());
    c.sample.merge(sample);
    return c;
  }

  @Override public void reset() {
    sample.clear();
  }

  /** Merges one partition's sample. */
  @Override public void add(HashSample<T> partial) {
    sample.merge(partial);
  }

  @Override public void merge(AccumulatorV2<HashSample<T>, HashSample<T>> other) {
    sample.merge(other.value());
  }

  /** A copy of the merged sample. */
  @Override public HashSample<T> value() {
    return sample.copy();
  }
}
