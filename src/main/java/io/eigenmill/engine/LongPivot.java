package io.eigenmill.engine;

import io.eigenmill.math.MetricCells;
import io.eigenmill.settings.Choices.Aggregate;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.HashMap;
import java.util.Iterator;
import java.util.List;
import java.util.Map;
import java.util.NoSuchElementException;
import org.apache.spark.Partitioner;
import org.apache.spark.api.java.JavaPairRDD;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.api.java.function.Function2;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.GenericInternalRow;
import org.apache.spark.sql.catalyst.expressions.UnsafeProjection;
import org.apache.spark.sql.catalyst.expressions.UnsafeRow;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.StructType;
import org.apache.spark.unsafe.types.UTF8String;
import org.apache.spark.util.LongAccumulator;
import scala.Tuple2;

/**
 * The pivot of a long table (one row per key, metric and value) into wide rows (one per key, one cell per metric),
 * in one shuffle where the cells of a row meet once.
 *
 * <p>Map side: each task reads its rows as Spark's binary rows (no Row object per cell), finds the metric's position
 * in a hash table of the wanted names, and folds the value into the row's {@link MetricCells} in a hash table keyed
 * by the binary key (entity, carried columns, time bucket). Consecutive rows of one key (the usual order of an
 * export) skip the hash lookup. When the table's cells exceed a budget the task sends them on and starts afresh, so
 * its memory stays bounded whatever the number of keys. Reduce side: the partials are partitioned by the key's hash
 * and sorted by key, then by where they were made (map task, flush), so each row's partials arrive together and in
 * a fixed order: the merge streams, needs memory for one row, and repeats bit for bit.
 *
 * <p>The generic pivot of the engine aggregates by (key, metric) first, one group per cell (as many as the long
 * table has rows), then gathers the cells of each key in a second aggregation: two hash aggregations and a shuffle
 * of every cell. Here a cell is a slot of an array from the first row on.
 *
 * <p>The input ({@code prepared}) has the key columns first (the time bucket last when the table is timed), then
 * {@code metric} a string, {@code value} a double, {@code t} a long (the time, for {@code last}).
 */
public final class LongPivot {
  private LongPivot() {}

  /**
   * What a pivot reads and makes.
   *
   * @param keySchema the key columns (the first columns of the input)
   * @param timed true when the last key field is the time bucket (a null there skips the row)
   * @param metrics the wanted metric names, in column order
   * @param flushBytes a map task sends its cells on when they hold more than this
   */
  public record Spec(StructType keySchema, boolean timed, List<String> metrics, Aggregate aggregate,
      long flushBytes) implements Serializable {}

  /** What the map side skipped, counted (exact when the pivot runs once). */
  public record Counters(LongAccumulator rows, LongAccumulator nullMetric, LongAccumulator otherMetric,
      LongAccumulator nullValue, LongAccumulator nonFinite, LongAccumulator nullTime, LongArrayAccumulator present,
      LongAccumulator pivotedRows) implements Serializable {
    public static Counters register(org.apache.spark.SparkContext sc, int metrics) {
      LongArrayAccumulator present = new LongArrayAccumulator(metrics);
      sc.register(present, "eigenmill long: cells present per metric");
      return new Counters(sc.longAccumulator("eigenmill long: rows read"),
          sc.longAccumulator("eigenmill long: null metric"), sc.longAccumulator("eigenmill long: other metrics"),
          sc.longAccumulator("eigenmill long: null value"), sc.longAccumulator("eigenmill long: NaN or infinite"),
          sc.longAccumulator("eigenmill long: null time"), present, sc.longAccumulator("eigenmill long: rows"));
    }
  }

  /**
   * The wide rows, lazily: the key fields then one double per metric (null where no value reached the cell), sorted
   * by key within each of {@code reducers} partitions.
   */
  public static JavaRDD<InternalRow> pivot(Dataset<Row> prepared, Spec spec, int reducers, Counters counters) {
    JavaRDD<InternalRow> rows = prepared.queryExecution().toRdd().toJavaRDD();
    JavaPairRDD<PivotKey, MetricCells> partials = rows.mapPartitionsWithIndex(new MapSide(spec, counters), false)
        .mapToPair(t -> t);
    return partials.repartitionAndSortWithinPartitions(new KeyPartitioner(reducers), new KeyOrder())
        .mapPartitions(new ReduceSide(spec, counters));
  }

  /** A row's key (binary) and where its partial was made: the sort and merge order. */
  static final class PivotKey implements Serializable {
    final UnsafeRow key;
    final int part;
    final int seq;

    PivotKey(UnsafeRow key, int part, int seq) {
      this.key = key;
      this.part = part;
      this.seq = seq;
    }

    @Override public int hashCode() {
      return key.hashCode();
    }

    @Override public boolean equals(Object o) {
      return o instanceof PivotKey p && p.key.equals(key) && p.part == part && p.seq == seq;
    }
  }

  /** Partitions by the key alone (not where the partial was made). */
  static final class KeyPartitioner extends Partitioner {
    private final int partitions;

    KeyPartitioner(int partitions) {
      this.partitions = partitions;
    }

    @Override public int numPartitions() {
      return partitions;
    }

    @Override public int getPartition(Object key) {
      return Math.floorMod(((PivotKey) key).key.hashCode(), partitions);
    }

    @Override public boolean equals(Object o) {
      return o instanceof KeyPartitioner k && k.partitions == partitions;
    }

    @Override public int hashCode() {
      return partitions;
    }
  }

  /** Key bytes (unsigned), then map task, then flush: a total order, the same in every run. */
  static final class KeyOrder implements Comparator<PivotKey>, Serializable {
    @Override public int compare(PivotKey a, PivotKey b) {
      int c = Arrays.compareUnsigned(a.key.getBytes(), b.key.getBytes());
      if (c != 0) {
        return c;
      }
      c = Integer.compare(a.part, b.part);
      return c != 0 ? c : Integer.compare(a.seq, b.seq);
    }
  }

  /** Folds a map task's rows into cells per key, sent on at the end or whenever they exceed the budget. */
  static final class MapSide implements Function2<Integer, Iterator<InternalRow>,
      Iterator<Tuple2<PivotKey, MetricCells>>> {
    private final Spec spec;
    private final Counters counters;

    MapSide(Spec spec, Counters counters) {
      this.spec = spec;
      this.counters = counters;
    }

    @Override public Iterator<Tuple2<PivotKey, MetricCells>> call(Integer part, Iterator<InternalRow> rows) {
      int m = spec.metrics().size();
      Map<UTF8String, Integer> index = new HashMap<>(2 * m);
      for (int j = 0; j < m; j++) {
        index.put(UTF8String.fromString(spec.metrics().get(j)), j);
      }
      int keyFields = spec.keySchema().size();
      int metricAt = keyFields;
      int valueAt = keyFields + 1;
      int timeAt = keyFields + 2;
      // the binary key: the input row's first columns, copied into a row of their own (reused between calls)
      UnsafeProjection project = UnsafeProjection.create(
          Arrays.stream(spec.keySchema().fields()).map(f -> f.dataType()).toArray(DataType[]::new));
      long budgetRows = Math.max(1, spec.flushBytes() / MetricCells.bytesPerRow(spec.aggregate(), m));
      return new Iterator<>() {
        private final Map<UnsafeRow, MetricCells> cells = new HashMap<>();
        /** The key each table entry owns (a lookup key is the projection's reused row). */
        private final Map<MetricCells, UnsafeRow> owners = new java.util.IdentityHashMap<>();
        private Iterator<Map.Entry<UnsafeRow, MetricCells>> sending;
        private int seq;
        private UnsafeRow lastKey;
        private MetricCells lastCells;
        private long read;
        private long nullMetric;
        private long otherMetric;
        private long nullValue;
        private long nonFinite;
        private long nullTime;

        @Override public boolean hasNext() {
          while (sending == null || !sending.hasNext()) {
            if (sending != null) {
              cells.clear();
              owners.clear();
              sending = null;
              seq++;
            }
            if (!fill()) {
              return false;
            }
            sending = new ArrayList<>(cells.entrySet()).iterator();
          }
          return true;
        }

        @Override public Tuple2<PivotKey, MetricCells> next() {
          if (!hasNext()) {
            throw new NoSuchElementException();
          }
          Map.Entry<UnsafeRow, MetricCells> e = sending.next();
          return new Tuple2<>(new PivotKey(e.getKey(), part, seq), e.getValue());
        }

        /** Reads rows until the budget is full or the input ends; false when there is nothing to send. */
        private boolean fill() {
          lastKey = null;
          lastCells = null;
          while (rows.hasNext() && cells.size() < budgetRows) {
            InternalRow row = rows.next();
            read++;
            if (row.isNullAt(metricAt)) {
              nullMetric++;
              continue;
            }
            Integer j = index.get(row.getUTF8String(metricAt));
            if (j == null) {
              otherMetric++;
              continue;
            }
            if (row.isNullAt(valueAt)) {
              nullValue++;
              continue;
            }
            double v = row.getDouble(valueAt);
            if (!Double.isFinite(v)) {
              nonFinite++;
              continue;
            }
            if (spec.timed() && row.isNullAt(keyFields - 1)) {
              nullTime++;
              continue;
            }
            UnsafeRow key = project.apply(row);
            MetricCells c;
            if (lastKey != null && lastKey.equals(key)) {
              c = lastCells;
            } else {
              c = cells.get(key);
              if (c == null) {
                UnsafeRow owned = key.copy();
                c = new MetricCells(spec.aggregate(), m, part, seq);
                cells.put(owned, c);
                owners.put(c, owned);
              }
              lastKey = owners.get(c);
              lastCells = c;
            }
            c.add(j, v, row.isNullAt(timeAt) ? 0L : row.getLong(timeAt));
          }
          if (!rows.hasNext()) {
            report();
          }
          return !cells.isEmpty();
        }

        private void report() {
          counters.rows().add(read);
          counters.nullMetric().add(nullMetric);
          counters.otherMetric().add(otherMetric);
          counters.nullValue().add(nullValue);
          counters.nonFinite().add(nonFinite);
          counters.nullTime().add(nullTime);
          read = nullMetric = otherMetric = nullValue = nonFinite = nullTime = 0;
        }
      };
    }
  }

  /** Merges each key's partials (adjacent and in order after the sort) into one wide row. */
  static final class ReduceSide implements FlatMapFunction<Iterator<Tuple2<PivotKey, MetricCells>>, InternalRow> {
    private final Spec spec;
    private final Counters counters;

    ReduceSide(Spec spec, Counters counters) {
      this.spec = spec;
      this.counters = counters;
    }

    @Override public Iterator<InternalRow> call(Iterator<Tuple2<PivotKey, MetricCells>> sorted) {
      int m = spec.metrics().size();
      DataType[] types = Arrays.stream(spec.keySchema().fields()).map(f -> f.dataType()).toArray(DataType[]::new);
      long[] present = new long[m];
      return new Iterator<>() {
        private Tuple2<PivotKey, MetricCells> ahead = sorted.hasNext() ? sorted.next() : null;
        private long made;

        @Override public boolean hasNext() {
          if (ahead == null && made >= 0) {
            counters.present().add(present);
            counters.pivotedRows().add(made);
            made = -1; // reported once
          }
          return ahead != null;
        }

        @Override public InternalRow next() {
          if (ahead == null) {
            throw new NoSuchElementException();
          }
          UnsafeRow key = ahead._1().key;
          MetricCells merged = ahead._2();
          ahead = sorted.hasNext() ? sorted.next() : null;
          while (ahead != null && ahead._1().key.equals(key)) {
            merged.merge(ahead._2());
            ahead = sorted.hasNext() ? sorted.next() : null;
          }
          Object[] values = new Object[types.length + m];
          for (int i = 0; i < types.length; i++) {
            values[i] = key.isNullAt(i) ? null : key.get(i, types[i]);
          }
          for (int j = 0; j < m; j++) {
            if (merged.present(j)) {
              values[types.length + j] = merged.value(j);
              present[j]++;
            }
          }
          made++;
          return new GenericInternalRow(values);
        }
      };
    }
  }
}
