package io.eigenmill.engine;

import org.apache.spark.util.AccumulatorV2;

/** An accumulator of a fixed-length array of counts, added element by element. */
public final class LongArrayAccumulator extends AccumulatorV2<long[], long[]> {
  private final long[] sums;

  public LongArrayAccumulator(int length) {
    this.sums = new long[length];
  }

  @Override public boolean isZero() {
    for (long s : sums) {
      if (s != 0) {
        return false;
      }
    }
    return true;
  }

  @Override public AccumulatorV2<long[], long[]> copy() {
    LongArrayAccumulator c = new LongArrayAccumulator(sums.length);
    System.arraycopy(sums, 0, c.sums, 0, sums.length);
    return c;
  }

  @Override public void reset() {
    java.util.Arrays.fill(sums, 0L);
  }

  @Override public void add(long[] v) {
    for (int i = 0; i < sums.length; i++) {
      sums[i] += v[i];
    }
  }

  @Override public void merge(AccumulatorV2<long[], long[]> other) {
    add(other.value());
  }

  @Override public long[] value() {
    return sums;
  }
}
