package io.eigenmill.math;

import io.eigenmill.settings.Choices.Aggregate;
import java.io.Serializable;

/**
 * The cells of one pivoted row while the values of a long table are gathered: for each of {@code m} metrics the
 * running aggregate of the values seen in one entity's time bucket ({@code input.long.aggregate}). Partials of the
 * same row merge in a fixed order (the order of {@link #part} and {@link #seq}), so that sums repeat bit for bit.
 *
 * <p>Rules: mean = sum / count; sum; max; min; last = the value at the latest time, rows tied at that time giving
 * their largest value (so the result does not depend on the order rows arrive in). A cell no value reached is absent.
 * Callers pass finite values only (a null, NaN or infinite value is counted and skipped before).
 */
public final class MetricCells implements Serializable {
  private static final long serialVersionUID = 1L;

  private final Aggregate aggregate;
  private final double[] acc;
  private final int[] count;
  /** Time of the kept value, for last only. */
  private final long[] time;
  /** Which partial this is: the map partition that made it, then its flush number there (merge order). */
  private final int part;
  private final int seq;

  public MetricCells(Aggregate aggregate, int metrics, int part, int seq) {
    this.aggregate = aggregate;
    this.acc = new double[metrics];
    this.count = new int[metrics];
    this.time = aggregate == Aggregate.LAST ? new long[metrics] : null;
    this.part = part;
    this.seq = seq;
  }

  public int part() {
    return part;
  }

  public int seq() {
    return seq;
  }

  public int metrics() {
    return acc.length;
  }

  /** Adds a finite value of metric {@code j} observed at {@code t} (used by last only). */
  public void add(int j, double v, long t) {
    int c = count[j];
    switch (aggregate) {
      case MEAN, SUM -> acc[j] = c == 0 ? v : acc[j] + v;
      case MAX -> acc[j] = c == 0 || v > acc[j] ? v : acc[j];
      case MIN -> acc[j] = c == 0 || v < acc[j] ? v : acc[j];
      case LAST -> {
        if (c == 0 || t > time[j] || t == time[j] && v > acc[j]) {
          acc[j] = v;
          time[j] = t;
        }
      }
    }
    count[j] = c + 1;
  }

  /** Merges {@code other} (a later partial of the same row) into this one. */
  public void merge(MetricCells other) {
    for (int j = 0; j < acc.length; j++) {
      int c = other.count[j];
      if (c == 0) {
        continue;
      }
      if (count[j] == 0) {
        acc[j] = other.acc[j];
        if (time != null) {
          time[j] = other.time[j];
        }
      } else {
        switch (aggregate) {
          case MEAN, SUM -> acc[j] += other.acc[j];
          case MAX -> acc[j] = Math.max(acc[j], other.acc[j]);
          case MIN -> acc[j] = Math.min(acc[j], other.acc[j]);
          case LAST -> {
            if (other.time[j] > time[j] || other.time[j] == time[j] && other.acc[j] > acc[j]) {
              acc[j] = other.acc[j];
              time[j] = other.time[j];
            }
          }
        }
      }
      count[j] += c;
    }
  }

  /** True when some value of metric {@code j} reached this row. */
  public boolean present(int j) {
    return count[j] > 0;
  }

  /** The values of metric {@code j} that reached this row. */
  public int count(int j) {
    return count[j];
  }

  /** The cell of metric {@code j} (only when {@link #present}). */
  public double value(int j) {
    return aggregate == Aggregate.MEAN ? acc[j] / count[j] : acc[j];
  }

  /** Bytes this partial holds, about (for the flush budget of a map task). */
  public static long bytesPerRow(Aggregate aggregate, int metrics) {
    return 64L + metrics * (aggregate == Aggregate.LAST ? 20L : 12L);
  }
}
