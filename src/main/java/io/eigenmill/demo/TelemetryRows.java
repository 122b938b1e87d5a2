package io.eigenmill.demo;

import java.time.LocalDate;
import java.util.Iterator;
import java.util.NoSuchElementException;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.codegen.UnsafeRowWriter;
import org.apache.spark.unsafe.types.UTF8String;

/**
 * Executor side of the generator: turns a partition of row ids into telemetry rows. Row id r is host
 * {@code r % hosts} at interval {@code r / hosts}, so every host is present from the first interval and a cut to an
 * exact row count only shortens the last interval. Each row is a pure function of (seed, host, interval), hence
 * identical whatever the partitioning.
 *
 * <p>Rows are Spark's binary rows, written field by field with an {@link UnsafeRowWriter} in the order of
 * {@link FleetTelemetryGenerator#schema}: no boxing, no external-row encoder. (An encoder is generated code per
 * column; at 20,000 columns generating and compiling it took longer than the data.) The returned row object is
 * reused from one row to the next, as Spark's own operators do; consumers copy what they keep.
 *
 * <p>The closure is the layout's six values; the fleet (O(hosts)), the extra-metric coefficients (O(M)) and the
 * encoded strings are rebuilt once per partition. Cost per row: the model's ~80 draws, one Gaussian and six
 * multiply-adds per extra column, one pass over the row buffer.
 */
final class TelemetryRows implements FlatMapFunction<Iterator<Object>, InternalRow> {
  private static final long serialVersionUID = 1L;
  static final int KEY_COLUMNS = 6;
  private static final long MICROS_PER_MINUTE = 60_000_000L;

  private final long seed;
  private final int hosts;
  private final long intervals;
  private final int extraMetrics;
  private final String startDate;

  TelemetryRows(long seed, int hosts, long intervals, int extraMetrics, String startDate) {
    this.seed = seed;
    this.hosts = hosts;
    this.intervals = intervals;
    this.extraMetrics = extraMetrics;
    this.startDate = startDate;
  }

  @Override
  public Iterator<InternalRow> call(Iterator<Object> ids) {
    return new Rows(ids);
  }

  /** The lazy row iterator of one partition, with its scratch state. */
  private final class Rows implements Iterator<InternalRow> {
    private final Iterator<Object> ids;
    private final Fleet fleet = new Fleet(seed, hosts, intervals);
    private final NoiseSource noise = new NoiseSource();
    private final TelemetryModel model;
    private final ExtraMetrics extras = new ExtraMetrics(seed, extraMetrics);
    private final double[] extraValues = new double[extraMetrics];
    private final LocalDate start = LocalDate.parse(startDate);
    private final long startMicros = start.toEpochDay() * 1440 * MICROS_PER_MINUTE;
    private final UTF8String[] hostNames = new UTF8String[hosts];
    private final UTF8String[] regionNames = new UTF8String[Region.ALL.length];
    private final UTF8String[] workloadNames = new UTF8String[Workload.ALL.length];
    private final UTF8String[] faultNames = new UTF8String[Fault.ALL.length];
    private final UTF8String[] dates;
    private final UnsafeRowWriter writer = new UnsafeRowWriter(KEY_COLUMNS + Metric.COUNT + extraMetrics, 64);

    Rows(Iterator<Object> ids) {
      this.ids = ids;
      this.model = new TelemetryModel(seed, fleet, start.toEpochDay(), noise);
      for (int h = 0; h < hosts; h++) {
        hostNames[h] = UTF8String.fromString(fleet.name[h]);
      }
      for (int k = 0; k < regionNames.length; k++) {
        regionNames[k] = UTF8String.fromString(Region.ALL[k].label);
      }
      for (int k = 0; k < workloadNames.length; k++) {
        workloadNames[k] = UTF8String.fromString(Workload.ALL[k].label);
      }
      for (int k = 0; k < faultNames.length; k++) {
        faultNames[k] = UTF8String.fromString(Fault.ALL[k].label);
      }
      dates = new UTF8String[(int) (intervals * TelemetryModel.MINUTES_PER_INTERVAL / 1440 + 1)];
    }

    @Override
    public boolean hasNext() {
      return ids.hasNext();
    }

    @Override
    public InternalRow next() {
      if (!ids.hasNext()) {
        throw new NoSuchElementException();
      }
      long id = (Long) ids.next();
      int host = (int) (id % hosts);
      long interval = id / hosts;
      Fault fault = model.compute(host, interval);
      long minutes = interval * TelemetryModel.MINUTES_PER_INTERVAL;
      writer.reset();
      writer.zeroOutNullBytes();
      writer.write(0, hostNames[host]);
      writer.write(1, regionNames[fleet.region[host].ordinal()]);
      writer.write(2, workloadNames[fleet.workload[host].ordinal()]);
      writer.write(3, startMicros + minutes * MICROS_PER_MINUTE);
      writer.write(4, date((int) (minutes / 1440)));
      if (fault == null) {
        writer.setNullAt(5);
      } else {
        writer.write(5, faultNames[fault.ordinal()]);
      }
      writeMetrics();
      extras.fill(model.factors, noise, extraValues);
      for (int j = 0; j < extraMetrics; j++) {
        writer.write(KEY_COLUMNS + Metric.COUNT + j, extraValues[j]);
      }
      return writer.getRow();
    }

    private void writeMetrics() {
      double[] v = model.values;
      boolean[] missing = model.missing;
      for (int m = 0; m < Metric.COUNT; m++) {
        int ordinal = KEY_COLUMNS + m;
        if (missing[m]) {
          writer.setNullAt(ordinal);
          continue;
        }
        switch (Metric.ALL[m].kind) {
          case DOUBLE -> writer.write(ordinal, v[m]);
          case FLOAT -> writer.write(ordinal, (float) v[m]);
          case INT -> writer.write(ordinal, (int) v[m]);
          case LONG -> writer.write(ordinal, (long) v[m]);
        }
      }
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
