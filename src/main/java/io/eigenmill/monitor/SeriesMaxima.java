package io.eigenmill.monitor;

import io.eigenmill.monitor.math.TimeBuckets;
import org.apache.spark.util.AccumulatorV2;

/**
 * The per-time-bucket maxima of T2 and Q of a scoring pass ({@link TimeBuckets}), gathered without reading the
 * scores again: each task builds its partition's summary and adds it once, when its rows are exhausted; merging
 * coarsens to the larger bucket width. As for every accumulator updated inside the write, Spark merges the updates
 * of successful tasks only (the write's result stage), so a retried task does not count twice.
 */
public final class SeriesMaxima extends AccumulatorV2<TimeBuckets, TimeBuckets> {
  private static final long serialVersionUID = 1L;

  private final TimeBuckets buckets;

  /** @param limit buckets a summary may hold before it doubles the bucket width */
  public SeriesMaxima(int limit) {
    this.buckets = new TimeBuckets(limit);
  }

  int limit() {
    return buckets.limit();
  }

  @Override public boolean isZero() {
    return buckets.isEmpty() && buckets.level() == 0;
  }

  @Override public AccumulatorV2<TimeBuckets, TimeBuckets> copy() {
    SeriesMaxima c = new SeriesMaxima(buckets.limit());
    c.buckets.merge(buckets);
    return c;
  }

  @Override public void reset() {
    buckets.clear();
  }

  /** Merges one partition's summary. */
  @Override public void add(TimeBuckets partial) {
    buckets.merge(partial);
  }

  @Override public void merge(AccumulatorV2<TimeBuckets, TimeBuckets> other) {
    buckets.merge(other.value());
  }

  /** A copy of the merged summary. */
  @Override public TimeBuckets value() {
    return buckets.copy();
  }
}
