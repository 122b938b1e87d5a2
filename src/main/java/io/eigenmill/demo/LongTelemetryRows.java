package io.eigenmill.demo;

import java.time.LocalDate;
import java.util.Iterator;
import java.util.List;
import java.util.NoSuchElementException;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.codegen.UnsafeRowWriter;
import org.apache.spark.unsafe.types.UTF8String;

/**
 * Executor side of the long layout: turns a partition of row ids into the samples of those wide rows, one binary row
 * per (host, interval, metric) in the order of {@link FleetTelemetryGenerator#longSchema}. Row id r is the wide
 * table's row r (host {@code r % hosts} at interval {@code r / hosts}); its values come from the same
 * {@link TelemetryModel} and {@link ExtraMetrics} calls as in {@link TelemetryRows}, so a seed gives the same
 * underlying values in both layouts.
 *
 * <p>What the melt adds, all a pure function of (seed, host, interval, metric index) through a stream of its own
 * (the model's draws are untouched):
 * <ul>
 *   <li>the sample time: the interval start plus a jitter of 0 to 299.999 s (whole milliseconds), so flooring
 *       {@code ts} to 5 minutes gives back the interval;</li>
 *   <li>absence: a sample is dropped with probability {@link FleetTelemetryGenerator#LONG_ABSENT_SHARE}; a null
 *       cell of the wide table (a sensor dropout) is never written either. A NaN reading stays a NaN value;</li>
 *   <li>the metric name: the wide column name, or its long name for the few metrics in
 *       {@link FleetTelemetryGenerator#LONG_NAMES}.</li>
 * </ul>
 * Int, long and float metrics are written as the double of their stored value, so they equal the wide cell cast to
 * double.
 *
 * <p>Cost per wide row: the model's row, then per metric one 64-bit mix and one binary row of six fields. The row
 * object is reused from one sample to the next, as Spark's own operators do.
 */
final class LongTelemetryRows implements FlatMapFunction<Iterator<Object>, InternalRow> {
  private static final long serialVersionUID = 1L;
  static final int COLUMNS = 6;
  /** The stream of the sample times and absences; the model uses 21-26, the extra metrics 31. */
  static final long SAMPLE_STREAM = 41;
  static final long INTERVAL_MILLIS = TelemetryModel.MINUTES_PER_INTERVAL * 60_000L;
  private static final long MICROS_PER_MINUTE = 60_000_000L;
  private static final long METRIC_MIX = 0xC2B2AE3D27D4EB4FL;

  private final long seed;
  private final int hosts;
  private final long intervals;
  private final int extraMetrics;
  private final String startDate;

  LongTelemetryRows(long seed, int hosts, long intervals, int extraMetrics, String startDate) {
    this.seed = seed;
    this.hosts = hosts;
    this.intervals = intervals;
    this.extraMetrics = extraMetrics;
    this.startDate = startDate;
  }

  @Override
  public Iterator<InternalRow> call(Iterator<Object> ids) {
    return new Samples(ids);
  }

  /** The key of one wide row's samples; {@link #sample} derives each metric's hash from it. */
  static long rowKey(long seed, int host, long interval) {
    return NoiseSource.key(seed, SAMPLE_STREAM, host, interval);
  }

  /** The hash of metric {@code metric} (index in the wide table's metric order) of the row with {@code rowKey}. */
  static long sample(long rowKey, int metric) {
    return NoiseSource.mix64(rowKey ^ ((metric + 1L) * METRIC_MIX));
  }

  /** Whether the sample with hash {@code h} is absent: its top 53 bits as a uniform [0, 1) below the share. */
  static boolean absent(long h) {
    return (h >>> 11) * 0x1.0p-53 < FleetTelemetryGenerator.LONG_ABSENT_SHARE;
  }

  /** The sample's offset into its interval, 0 .. 299,999 ms, from bits independent of {@link #absent}. */
  static long jitterMillis(long h) {
    return (NoiseSource.mix64(h) >>> 1) % INTERVAL_MILLIS;
  }

  /** The lazy sample iterator of one partition, with its scratch state. */
  private final class Samples implements Iterator<InternalRow> {
    private final Iterator<Object> ids;
    private final Fleet fleet = new Fleet(seed, hosts, intervals);
    private final NoiseSource noise = new NoiseSource();
    private final TelemetryModel model;
    private final ExtraMetrics extras = new ExtraMetrics(seed, extraMetrics);
    private final int metrics = Metric.COUNT + extraMetrics;
    /** The current wide row's values as stored (base metrics, then extra metrics); written only where present. */
    private final double[] values = new double[metrics];
    private final boolean[] present = new boolean[metrics];
    private final double[] extraValues = new double[extraMetrics];
    private final LocalDate start = LocalDate.parse(startDate);
    private final long startMicros = start.toEpochDay() * 1440 * MICROS_PER_MINUTE;
    private final UTF8String[] hostNames = new UTF8String[hosts];
    private final UTF8String[] regionNames = new UTF8String[Region.ALL.length];
    private final UTF8String[] metricNames = new UTF8String[metrics];
    private final UTF8String[] dates;
    private final UnsafeRowWriter writer = new UnsafeRowWriter(COLUMNS, 64);

    private int host;
    private long rowKey;
    private long intervalMicros;
    private UTF8String date;
    /** The next metric index of the current row to look at; {@code metrics} when the row is used up. */
    private int next;

    Samples(Iterator<Object> ids) {
      this.ids = ids;
      this.model = new TelemetryModel(seed, fleet, start.toEpochDay(), noise);
      for (int h = 0; h < hosts; h++) {
        hostNames[h] = UTF8String.fromString(fleet.name[h]);
      }
      for (int k = 0; k < regionNames.length; k++) {
        regionNames[k] = UTF8String.fromString(Region.ALL[k].label);
      }
      List<String> names = FleetTelemetryGenerator.longMetricNames(extraMetrics);
      for (int m = 0; m < metrics; m++) {
        metricNames[m] = UTF8String.fromString(names.get(m));
      }
      dates = new UTF8String[(int) (intervals * TelemetryModel.MINUTES_PER_INTERVAL / 1440 + 1)];
      next = metrics;
    }

    @Override
    public boolean hasNext() {
      while (true) {
        while (next < metrics) {
          if (present[next]) {
            return true;
          }
          next++;
        }
        if (!ids.hasNext()) {
          return false;
        }
        compute((Long) ids.next());
      }
    }

    @Override
    public InternalRow next() {
      if (!hasNext()) {
        throw new NoSuchElementException();
      }
      int m = next++;
      writer.reset();
      writer.zeroOutNullBytes();
      writer.write(0, hostNames[host]);
      writer.write(1, regionNames[fleet.region[host].ordinal()]);
      writer.write(2, intervalMicros + jitterMillis(sample(rowKey, m)) * 1000);
      writer.write(3, metricNames[m]);
      writer.write(4, values[m]);
      writer.write(5, date);
      return writer.getRow();
    }

    /** Computes wide row {@code id} into {@link #values} and {@link #present}, and restarts at its first metric. */
    private void compute(long id) {
      host = (int) (id % hosts);
      long interval = id / hosts;
      model.compute(host, interval);
      extras.fill(model.factors, noise, extraValues);
      rowKey = rowKey(seed, host, interval);
      long minutes = interval * TelemetryModel.MINUTES_PER_INTERVAL;
      intervalMicros = startMicros + minutes * MICROS_PER_MINUTE;
      date = date((int) (minutes / 1440));
      double[] v = model.values;
      for (int m = 0; m < Metric.COUNT; m++) {
        values[m] = switch (Metric.ALL[m].kind) {
          case DOUBLE -> v[m];
          case FLOAT -> (float) v[m];
          case INT -> (int) v[m];
          case LONG -> (long) v[m];
        };
        present[m] = !model.missing[m] && !absent(sample(rowKey, m));
      }
      for (int j = 0; j < extraMetrics; j++) {
        values[Metric.COUNT + j] = extraValues[j];
        present[Metric.COUNT + j] = !absent(sample(rowKey, Metric.COUNT + j));
      }
      next = 0;
    }

    private UTF8String date(int day) {
      UTF8String d = dates[day];
      if (d == null) {
        d = UTF8String.fromString(start.plusDays(day).toString());
        dates[day] = d;
      }
      return d;
    }
  }
}
