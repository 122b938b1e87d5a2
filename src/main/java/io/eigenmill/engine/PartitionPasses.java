package io.eigenmill.engine;

import static io.eigenmill.engine.ValueKinds.BYTE;
import static io.eigenmill.engine.ValueKinds.DOUBLE;
import static io.eigenmill.engine.ValueKinds.FLOAT;
import static io.eigenmill.engine.ValueKinds.INT;
import static io.eigenmill.engine.ValueKinds.LONG;
import static io.eigenmill.engine.ValueKinds.SHORT;

import io.eigenmill.math.BlockPrep;
import io.eigenmill.math.ShiftedCopy;
import java.io.Serializable;
import java.util.Iterator;
import java.util.List;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.api.java.function.Function2;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.types.DecimalType;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.apache.spark.util.LongAccumulator;

/**
 * Executor-side functions that turn one partition into one {@link PartialResult}: a columnar reader over Spark's
 * Parquet {@link ColumnarBatch}es (no Row objects) and a Row reader for sources without a columnar scan. Both feed a
 * {@link BlockFiller}; both are pure functions of the partition's rows.
 */
public final class PartitionPasses {
  private PartitionPasses() {}

  /** Settings shared by both readers. */
  record PassSpec<A extends Serializable>(int d, int blockRows, ReadMode mode, BlockPrep prep,
      BlockAggregator<A> aggregator, LongAccumulator rowsRead) implements Serializable {
    BlockFiller<A> filler() {
      return filler(blockRows);
    }

    BlockFiller<A> filler(int capacity) {
      return filler(capacity, 0);
    }

    /** A filler whose block allocates {@code firstRows} rows at first (0: the block's default). */
    BlockFiller<A> filler(int capacity, int firstRows) {
      return new BlockFiller<>(d, capacity, firstRows, mode, prep, aggregator);
    }
  }

  /** Reads columnar batches; {@code ordinals[j]} is feature j's position in the batch, {@code kinds[j]} its type. */
  static final class ColumnarPass<A extends Serializable>
      implements FlatMapFunction<Iterator<ColumnarBatch>, PartialResult<A>> {
    private static final long serialVersionUID = 1L;
    private final PassSpec<A> spec;
    private final int[] ordinals;
    private final int[] kinds;

    ColumnarPass(PassSpec<A> spec, int[] ordinals, int[] kinds) {
      this.spec = spec;
      this.ordinals = ordinals;
      this.kinds = kinds;
    }

    @Override
    public Iterator<PartialResult<A>> call(Iterator<ColumnarBatch> batches) {
      BlockFiller<A> filler = spec.filler();
      copyBatches(batches, ordinals, kinds, filler);
      PartialResult<A> result = filler.finish();
      spec.rowsRead().add(result.counts().rowsRead());
      return List.of(result).iterator();
    }
  }

  /**
   * A {@link ColumnBlock} filled in slices: {@link #room} rows fit now, the reader writes them into {@link #block()}
   * at its base, {@link #commit} accepts them.
   */
  public interface SliceSink {
    /** The block the next slice is written to (asked after {@link #room}). */
    ColumnBlock block();

    /** How many of {@code wanted} rows fit in the current slice. */
    int room(int wanted);

    /** Accepts the {@code t} rows written at the block's base. */
    void commit(int t);
  }

  /**
   * Copies the columns at {@code ordinals} (value kinds {@code kinds}) of every batch into {@code sink}, one slice
   * at a time, as doubles ({@link #copyColumn}).
   */
  public static void copyBatches(Iterator<ColumnarBatch> batches, int[] ordinals, int[] kinds, SliceSink sink) {
    ColumnVector[] vectors = new ColumnVector[ordinals.length];
    while (batches.hasNext()) {
      ColumnarBatch batch = batches.next();
      for (int j = 0; j < ordinals.length; j++) {
        vectors[j] = batch.column(ordinals[j]);
      }
      copyRows(vectors, kinds, 0, batch.numRows(), sink);
    }
  }

  /** Copies rows {@code start .. start + count - 1} of the batch columns {@code vectors} into {@code sink}. */
  static void copyRows(ColumnVector[] vectors, int[] kinds, int start, int count, SliceSink sink) {
    int end = start + count;
    while (start < end) {
      int t = sink.room(end - start);
      ColumnBlock block = sink.block();
      for (int j = 0; j < vectors.length; j++) {
        copyColumn(vectors[j], kinds[j], start, t, block, j);
      }
      sink.commit(t);
      start += t;
    }
  }

  /**
   * Copies the batch rows {@code rows[from .. from + t - 1]} of column {@code v} into column j of the sink's slice:
   * the same values and missing cells as {@link #copyColumn} gives for the same rows (a null cell never read, NaN and
   * infinities missing, the sink's origin subtracted), one value at a time.
   */
  public static void gatherColumn(ColumnVector v, int kind, int[] rows, int from, int t, BlockSink sink, int j) {
    double[] dst = sink.block();
    int off = j * sink.ld() + sink.base();
    double[] origin = sink.origin();
    double o = origin == null ? 0.0 : origin[j];
    double[] heap = kind == DOUBLE ? HeapColumns.doubles(v) : null;
    int s0 = heap == null ? 0 : HeapColumns.start(v);
    boolean nulls = v.hasNull();
    for (int i = 0; i < t; i++) {
      int r = rows[from + i];
      if (nulls && v.isNullAt(r)) {
        sink.markMissing(i, j);
        continue;
      }
      double x = heap != null ? heap[s0 + r] : kind == DOUBLE ? v.getDouble(r) : kind == FLOAT ? v.getFloat(r)
          : exactValue(v, kind, r);
      dst[off + i] = x - o;
      if (x - x != 0.0) {
        sink.markMissing(i, j);
      }
    }
  }

  /**
   * Copies rows {@code start .. start + t - 1} of a batch column of type {@code kind} into column j of the sink's
   * next slice, as doubles (exact widening for integers and floats, {@code Decimal.toDouble} for decimals: the
   * values a cast to double gives) minus the sink's origin for the column (0 when it has none: x - 0 is x, bit for
   * bit), and reports the missing cells.
   *
   * <p>A null cell's value is never read: a vector decoded from dictionary pages keeps, at a null slot, whatever
   * dictionary code an earlier batch left there, which can lie beyond the current row group's dictionary (Parquet
   * written by other writers, with several row groups and nulls, made {@code getDouble} throw). Columns with nulls
   * therefore take a loop that asks {@code isNullAt} first; columns without take the plain loops.
   */
  public static void copyColumn(ColumnVector v, int kind, int start, int t, BlockSink filler, int j) {
    double[] dst = filler.block();
    int off = j * filler.ld() + filler.base();
    double[] origin = filler.origin();
    double o = origin == null ? 0.0 : origin[j];
    if (kind == DOUBLE || kind == FLOAT) {
      if (copyFloating(v, kind, start, t, dst, off, o) || v.hasNull()) {
        markFloating(v, kind, start, t, filler, j);
      }
      return;
    }
    if (v.hasNull()) {
      for (int i = 0; i < t; i++) {
        if (v.isNullAt(start + i)) {
          filler.markMissing(i, j);
        } else {
          dst[off + i] = exactValue(v, kind, start + i) - o;
        }
      }
      return;
    }
    switch (kind) {
      case INT:
        for (int i = 0; i < t; i++) {
          dst[off + i] = v.getInt(start + i) - o;
        }
        break;
      case LONG:
        for (int i = 0; i < t; i++) {
          dst[off + i] = v.getLong(start + i) - o;
        }
        break;
      default:
        for (int i = 0; i < t; i++) {
          dst[off + i] = exactValue(v, kind, start + i) - o;
        }
        break;
    }
  }

  /** The value of non-null row r of an integer or decimal column, as a cast to double gives it. */
  static double exactValue(ColumnVector v, int kind, int r) {
    switch (kind) {
      case INT:
        return v.getInt(r);
      case LONG:
        return v.getLong(r);
      case SHORT:
        return v.getShort(r);
      case BYTE:
        return v.getByte(r);
      default:
        DecimalType dt = (DecimalType) v.dataType();
        return v.getDecimal(r, dt.precision(), dt.scale()).toDouble();
    }
  }

  private static final ShiftedCopy COPY = ShiftedCopy.best();

  /**
   * Copies a double or float column minus {@code o} and reports whether a value read is NaN or infinite, with the
   * copy kernel ({@link ShiftedCopy}: SIMD where the JVM has the vector module). A column of doubles whose array Spark
   * lets us see ({@link HeapColumns}) is copied straight from it; other columns (floats, off-heap vectors,
   * dictionaries) are first read value by value into the block (a null cell as 0, never read: see
   * {@link #copyColumn}), then shifted and checked in place: the same values.
   */
  private static boolean copyFloating(ColumnVector v, int kind, int start, int t, double[] dst, int off, double o) {
    double[] values = kind == DOUBLE ? HeapColumns.doubles(v) : null;
    if (values != null) {
      return COPY.copy(values, HeapColumns.start(v) + start, dst, off, t, o);
    }
    boolean nulls = v.hasNull();
    for (int i = 0; i < t; i++) {
      int r = start + i;
      dst[off + i] = nulls && v.isNullAt(r) ? 0.0 : kind == DOUBLE ? v.getDouble(r) : v.getFloat(r);
    }
    return COPY.copy(dst, off, dst, off, t, o);
  }

  /**
   * Marks the null, NaN and infinite cells of a copied floating column (null cells hold an undefined value). Reads
   * the values again: a copy shifted by an origin is not what decides.
   */
  private static void markFloating(ColumnVector v, int kind, int start, int t, BlockSink filler, int j) {
    boolean nulls = v.hasNull();
    for (int i = 0; i < t; i++) {
      if (nulls && v.isNullAt(start + i)) {
        filler.markMissing(i, j);
        continue;
      }
      double x = kind == DOUBLE ? v.getDouble(start + i) : v.getFloat(start + i);
      if (x - x != 0.0) {
        filler.markMissing(i, j);
      }
    }
  }

  /** Reads Rows whose columns are the features, already cast to double. */
  static final class RowPass<A extends Serializable> implements FlatMapFunction<Iterator<Row>, PartialResult<A>> {
    private static final long serialVersionUID = 1L;
    private final PassSpec<A> spec;

    RowPass(PassSpec<A> spec) {
      this.spec = spec;
    }

    @Override
    public Iterator<PartialResult<A>> call(Iterator<Row> rows) {
      BlockFiller<A> filler = spec.filler();
      int d = spec.d();
      while (rows.hasNext()) {
        copyRow(rows.next(), d, filler);
      }
      PartialResult<A> result = filler.finish();
      spec.rowsRead().add(result.counts().rowsRead());
      return List.of(result).iterator();
    }

    /** Copies the d doubles at the start of {@code row} into {@code sink} as one slice of one row. */
    static void copyRow(Row row, int d, SliceSink sink) {
      sink.room(1);
      ColumnBlock block = sink.block();
      double[] dst = block.block();
      int base = block.base();
      int ld = block.ld();
      double[] origin = block.origin();
      for (int j = 0; j < d; j++) {
        if (row.isNullAt(j)) {
          block.markMissing(0, j);
          continue;
        }
        double x = row.getDouble(j);
        dst[j * ld + base] = origin == null ? x : x - origin[j];
        if (Double.isNaN(x) || Double.isInfinite(x)) {
          block.markMissing(0, j);
        }
      }
      sink.commit(1);
    }
  }

  /** The tree-merge function of partial results. */
  static final class MergePartials<A extends Serializable>
      implements Function2<PartialResult<A>, PartialResult<A>, PartialResult<A>> {
    private static final long serialVersionUID = 1L;
    private final BlockAggregator<A> aggregator;

    MergePartials(BlockAggregator<A> aggregator) {
      this.aggregator = aggregator;
    }

    @Override
    public PartialResult<A> call(PartialResult<A> left, PartialResult<A> right) {
      return new PartialResult<>(left.counts().merge(right.counts()),
          aggregator.merge(left.value(), right.value()));
    }
  }
}
