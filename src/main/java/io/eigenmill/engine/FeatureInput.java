package io.eigenmill.engine;

import io.eigenmill.math.BlockPrep;
import io.eigenmill.math.BlockSummary;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.apache.spark.util.LongAccumulator;

/**
 * The feature columns of the input table as a source of blocks for one or more passes.
 *
 * <p>When the executed plan of {@code SELECT features} bottoms out in a Parquet scan that produces columnar batches,
 * passes read those batches directly ({@code executeColumnar()}): no Row objects, values copied column by column
 * into the block. Otherwise (CSV, views, too many columns for the vectorised reader) passes read Rows of the features
 * cast to double. Either way a pass is one Spark job: one partial per partition, merged in a fixed order (partition index), so that runs repeat bit for bit.
 */
public final class FeatureInput {
  private final Dataset<Row> table;
  private final List<String> features;
  private final int blockRows;
  private final ColumnarScan columnarScan;
  private final int[] ordinals;
  private final int[] kinds;
  /** The split size of the columnar file scan ({@link ColumnarScan#batches(long)}); 0: Spark's own. */
  private final long splitBytes;
  /** The features kept in executor memory by the first pass ({@link KeptBatches}), or null. */
  private JavaRDD<ColumnarBatch> kept;

  public FeatureInput(Dataset<Row> table, List<String> features, int blockRows) {
    this(table, features, blockRows, 0);
  }

  /**
   * @param splitBytes the split size of a columnar Parquet scan (the plan's, {@code JobPlan.splitBytes()}), or 0
   *     for Spark's own splits
   */
  public FeatureInput(Dataset<Row> table, List<String> features, int blockRows, long splitBytes) {
    this.table = table;
    this.splitBytes = splitBytes;
    this.features = List.copyOf(features);
    this.blockRows = blockRows;
    ColumnarScan scan = ColumnarScan.select(table, features);
    int[] ord = scan == null ? null : scan.ordinals(features);
    this.columnarScan = ord == null ? null : scan;
    this.ordinals = ord;
    this.kinds = ord == null ? null : kindsIn(scan, ord, features);
  }

  /**
   * From the next pass on, passes read the features kept in executor memory by the first of them
   * ({@link KeptBatches}): the same values, so the same results, without reading the input again. Only for a
   * columnar input; {@link #release} frees the memory.
   */
  public void keepInMemory() {
    if (!columnar()) {
      throw new IllegalStateException("only a columnar input keeps its batches");
    }
    if (kept == null) {
      kept = KeptBatches.keep(columnarScan.batches(splitBytes), ordinals, kinds);
    }
  }

  /**
   * Frees what {@link #keepInMemory} kept, and waits until the executors have dropped it, so that the next job in
   * the same session finds the storage memory free when it decides whether to keep its own; passes read the input
   * again.
   */
  public void release() {
    if (kept != null) {
      kept.unpersist(true);
      kept = null;
    }
  }

  /** True when passes read Parquet's columnar batches; false for the Row path. */
  public boolean columnar() {
    return columnarScan != null;
  }

  public String readPath() {
    return columnar() ? "columnar Parquet batches" : "rows (no columnar scan for this input)";
  }

  /**
   * The Parquet scan's columnar batches and, for each feature, its column position in a batch; null when this input
   * has no columnar scan. For the benchmark's read floor.
   */
  public JavaRDD<ColumnarBatch> columnarBatches() {
    return columnar() ? columnarScan.batches(splitBytes) : null;
  }

  public int[] batchOrdinals() {
    return ordinals == null ? null : ordinals.clone();
  }

  public List<String> features() {
    return features;
  }

  public Dataset<Row> table() {
    return table;
  }

  /**
   * Runs one pass: every partition reads its rows into blocks ({@code mode} decides what a missing cell does),
   * applies {@code prep}, feeds {@code aggregator}; partials merge in a tree. Progress goes to the log.
   */
  public <A extends Serializable> PartialResult<A> run(String stage, BlockAggregator<A> aggregator, ReadMode mode,
      BlockPrep prep) {
    var sc = table.sparkSession().sparkContext();
    LongAccumulator rows = sc.longAccumulator("eigenmill rows read (" + stage + ")");
    var spec = new PartitionPasses.PassSpec<>(features.size(), blockRows, mode, prep, aggregator, rows);
    JavaRDD<PartialResult<A>> partials;
    if (kept != null) {
      int d = features.size();
      partials = kept.mapPartitions(new PartitionPasses.ColumnarPass<>(spec, KeptBatches.ordinals(d),
          KeptBatches.kinds(d)));
    } else if (columnar()) {
      JavaRDD<ColumnarBatch> batches = columnarScan.batches(splitBytes);
      partials = batches.mapPartitions(new PartitionPasses.ColumnarPass<>(spec, ordinals, kinds));
    } else {
      Column[] cast = features.stream().map(f -> functions.col(f).cast("double")).toArray(Column[]::new);
      partials = table.select(cast).javaRDD().mapPartitions(new PartitionPasses.RowPass<>(spec));
    }
    try (Progress progress = Progress.start(table.sparkSession(), stage, rows)) {
      if (partials.getNumPartitions() == 0) {
        return new PartialResult<>(new ReadCounts(features.size()), aggregator.zero());
      }
      PartialResult<A> result = OrderedMerge.merge(partials, new PartitionPasses.MergePartials<>(aggregator));
      progress.done(result.counts().rowsRead());
      return result;
    }
  }

  /**
   * Runs one keyed pass: as {@link #run}, but every partition keeps one partial per value of the {@code keys}
   * columns (blocks of {@code capacity} rows per key, see {@link KeyedPasses}) and the partials merge per key on the
   * driver, each key in the tree an unkeyed pass over that key's rows would use. Keys in the order they first
   * appear (partition by partition).
   */
  public <A extends Serializable> KeyedResult<A> runKeyed(String stage, BlockAggregator<A> aggregator, ReadMode mode,
      BlockPrep prep, KeyColumns keys, int capacity) {
    return runKeyed(stage, aggregator, mode, prep, keys, capacity, KeyedPasses.Routing.full());
  }

  /** {@link #runKeyed} with the blocks of later keys smaller and some keys left out ({@code routing}). */
  public <A extends Serializable> KeyedResult<A> runKeyed(String stage, BlockAggregator<A> aggregator, ReadMode mode,
      BlockPrep prep, KeyColumns keys, int capacity, KeyedPasses.Routing routing) {
    var sc = table.sparkSession().sparkContext();
    LongAccumulator rows = sc.longAccumulator("eigenmill rows read (" + stage + ")");
    var spec = new PartitionPasses.PassSpec<>(features.size(), capacity, mode, prep, aggregator, rows);
    ColumnarScan scan = keyedColumnar(keys);
    JavaRDD<KeyedPasses.KeyedPartial<A>> partials = keyedPartials(spec, keys, scan, routing);
    try (Progress progress = Progress.start(table.sparkSession(), stage, rows)) {
      int p = partials.getNumPartitions();
      Map<KeyValues, PartialResult<A>> merged = p == 0 ? new LinkedHashMap<>()
          : KeyedPasses.mergeOnDriver(partials.collect(), p, aggregator);
      ReadCounts total = new ReadCounts(features.size());
      merged.forEach((k, r) -> {
        if (!k.equals(KeyedPasses.POOLED)) {
          total.merge(r.counts());
        }
      });
      if (merged.containsKey(KeyedPasses.POOLED)) {
        // the pooled partial counts every row, those of skipped keys too
        ReadCounts pooled = merged.get(KeyedPasses.POOLED).counts();
        total.rowsRead = pooled.rowsRead;
        total.rowsDropped = pooled.rowsDropped;
        System.arraycopy(pooled.missingCells, 0, total.missingCells, 0, total.missingCells.length);
      }
      progress.done(rows.value());
      return new KeyedResult<>(keys, merged, total, scan != null);
    }
  }

  /**
   * A keyed pass whose partials merge per key on the executors (one shuffle of partials into {@code reducers}
   * partitions, each key merged in the same tree as on the driver), where {@code finish} turns each key's merged
   * partial into a small result; only the results reach the driver, in no particular order. For many keys, whose
   * summaries together would not fit the driver.
   */
  public <A extends Serializable, R extends Serializable> List<R> runKeyedOnExecutors(String stage,
      BlockAggregator<A> aggregator, ReadMode mode, BlockPrep prep, KeyColumns keys, int capacity,
      KeyedPasses.Routing routing, org.apache.spark.api.java.function.Function<scala.Tuple2<KeyValues,
          PartialResult<A>>, R> finish, int reducers) {
    var sc = table.sparkSession().sparkContext();
    LongAccumulator rows = sc.longAccumulator("eigenmill rows read (" + stage + ")");
    var spec = new PartitionPasses.PassSpec<>(features.size(), capacity, mode, prep, aggregator, rows);
    JavaRDD<KeyedPasses.KeyedPartial<A>> partials = keyedPartials(spec, keys, keyedColumnar(keys), routing);
    int p = partials.getNumPartitions();
    try (Progress progress = Progress.start(table.sparkSession(), stage, rows)) {
      if (p == 0) {
        return List.of();
      }
      List<R> out = partials.flatMapToPair(new KeyedPasses.ByKey<A>()).groupByKey(Math.max(1, reducers))
          .map(new KeyedPasses.MergeAndFinish<>(p, aggregator, finish)).collect();
      progress.done(rows.value());
      return out;
    }
  }

  /** What a keyed pass found: the merged partial of each key (first-appearance order) and the counts of all rows. */
  public record KeyedResult<A extends Serializable>(KeyColumns keys, Map<KeyValues, PartialResult<A>> byKey,
      ReadCounts total, boolean columnar) {}

  private <A extends Serializable> JavaRDD<KeyedPasses.KeyedPartial<A>> keyedPartials(
      PartitionPasses.PassSpec<A> spec, KeyColumns keys, ColumnarScan scan, KeyedPasses.Routing routing) {
    if (scan != null) {
      int[] keyOrdinals = scan.ordinals(keys.names());
      return scan.batches(splitBytes).mapPartitionsWithIndex(
          new KeyedPasses.ColumnarKeyed<>(spec, scan.ordinals(features), kinds, keyOrdinals, keys, routing), false);
    }
    List<Column> cols = new ArrayList<>();
    features.forEach(f -> cols.add(functions.col(f).cast("double")));
    keys.names().forEach(k -> cols.add(functions.col(k).cast("string")));
    return table.select(cols.toArray(Column[]::new)).javaRDD()
        .mapPartitionsWithIndex(new KeyedPasses.RowKeyed<>(spec, keys, routing), false);
  }

  /**
   * Rows per value of the {@code keys} columns, counted by a task per partition over columnar batches of the key
   * columns alone, with the keyed pass's own coder ({@link KeyedPasses.CountKeys}), and summed on the driver: one
   * scan of the key columns, no aggregation of Spark's (whose generated code and shuffle cost a cold process
   * seconds before the pass). Keys in the order they first appear, partition by partition. Null when the key
   * columns have no columnar scan (then the caller counts otherwise).
   */
  public Map<KeyValues, Long> countKeys(KeyColumns keys) {
    if (!columnar()) {
      return null;
    }
    ColumnarScan scan = ColumnarScan.select(table, keys.names());
    int[] keyOrdinals = scan == null ? null : scan.ordinals(keys.names());
    if (keyOrdinals == null) {
      return null;
    }
    Map<KeyValues, Long> counts = new LinkedHashMap<>();
    for (KeyedPasses.KeyCounts part : scan.batches(splitBytes).mapPartitions(
        new KeyedPasses.CountKeys(keyOrdinals, keys)).collect()) {
      for (int i = 0; i < part.keys().size(); i++) {
        counts.merge(part.keys().get(i), part.rows()[i], Long::sum);
      }
    }
    return counts;
  }

  /** The columnar scan of the features and the key columns, or null (then keyed passes read rows). */
  private ColumnarScan keyedColumnar(KeyColumns keys) {
    if (!columnar()) {
      return null;
    }
    List<String> cols = new ArrayList<>(features);
    cols.addAll(keys.names());
    ColumnarScan scan = ColumnarScan.select(table, cols);
    return scan != null && scan.ordinals(features) != null && scan.ordinals(keys.names()) != null ? scan : null;
  }

  /** Runs one pass that computes a {@link BlockSummary} per partition ({@link SummaryAggregator}), as above. */
  public <S extends BlockSummary<S>> PartialResult<S> run(String stage, BlockSummary.Factory<S> summaries,
      ReadMode mode, BlockPrep prep) {
    return run(stage, new SummaryAggregator<>(summaries), mode, prep);
  }

  private static int[] kindsIn(ColumnarScan scan, int[] ordinals, List<String> features) {
    int[] k = scan.kinds(ordinals);
    for (int j = 0; j < k.length; j++) {
      if (k[j] < 0) {
        throw new IllegalStateException("column " + features.get(j) + " is not numeric");
      }
    }
    return k;
  }
}
