package io.eigenmill.engine;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.api.java.function.Function2;
import org.apache.spark.api.java.function.PairFlatMapFunction;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import scala.Tuple2;

/**
 * Executor-side functions of a keyed pass: every partition keeps one block and one partial per key it meets (a
 * {@link BlockFiller} per key), routes each row to its key's block, and emits the keys' partials. A batch whose rows
 * all have one key (a partition column, a sorted table) is copied as in an unkeyed pass; a batch of mixed keys is
 * ordered by key code (a counting sort of its row numbers, stable, so each key's rows keep the table's order) and
 * each key's rows are gathered into its block.
 *
 * <p>Equality with a pass over one key's rows: a key's rows reach its block in the table's order and fill blocks of
 * the same capacity, so with the capacity of the unkeyed pass ({@code reduce.block-rows}) a key's partial in each
 * partition is bit for bit that of an unkeyed pass over a table filtered to the key; merged per key in the unkeyed
 * pass's tree ({@link OrderedMerge#mergeSlots}), the result is too.
 */
public final class KeyedPasses {
  private KeyedPasses() {}

  /** The partials of one partition: one per key met, in the order the keys first appeared. */
  public record KeyedPartial<A extends Serializable>(int partition, List<KeyValues> keys,
      List<PartialResult<A>> partials) implements Serializable {}

  /**
   * How a task sizes its keys' blocks and which keys it leaves out.
   *
   * @param fullKeys the first {@code fullKeys} keys a task meets get blocks of the pass's {@code blockRows} (the
   *     unkeyed pass's size, for equality with it); later keys get blocks of {@code smallRows} rows, so that the
   *     blocks of many keys stay within a task's memory
   * @param skip keys whose rows are read but not summarised (groups known to be too small)
   * @param firstRows rows a key's block allocates at first (it grows as rows arrive, up to its capacity); 0 for
   *     the blocks' own default. A pass that knows about how many rows a key has in a task (the groups' counts)
   *     allocates that much at once instead of growing the block, copy by copy
   */
  public record Routing(int fullKeys, int smallRows, java.util.Set<KeyValues> skip, boolean pooled, int firstRows)
      implements Serializable {
    /** Every key with full blocks, none skipped, no pooled partial. */
    public static Routing full() {
      return new Routing(Integer.MAX_VALUE, 0, java.util.Set.of(), false, 0);
    }
  }

  /**
   * The key of the pooled partial ({@link Routing#pooled}): all rows of the partition, skipped keys' rows included.
   * No key of a pass has zero columns, so it never names a real key.
   */
  public static final KeyValues POOLED = new KeyValues(List.of());

  /** Per-partition routing of rows to the blocks of their keys. */
  private static final class Router<A extends Serializable> {
    private final PartitionPasses.PassSpec<A> spec;
    private final Routing routing;
    private final KeyColumns.Coder coder;
    private final List<BlockFiller<A>> fillers = new ArrayList<>();
    private long skippedRows;
    private int made;
    /** With a pooled partial: the rows of skipped keys, which join only the pooled partial. */
    private BlockFiller<A> rest;

    Router(PartitionPasses.PassSpec<A> spec, Routing routing, KeyColumns.Coder coder) {
      this.spec = spec;
      this.routing = routing;
      this.coder = coder;
    }

    /** The filler of key {@code code}; for a skipped key null, or the pooled partial's filler of the rest. */
    BlockFiller<A> filler(int code) {
      while (fillers.size() <= code) {
        boolean skip = routing.skip().contains(coder.key(fillers.size()));
        if (skip) {
          if (routing.pooled() && rest == null) {
            rest = spec.filler();
          }
          fillers.add(rest);
        } else {
          fillers.add(spec.filler(made++ < routing.fullKeys() ? spec.blockRows() : routing.smallRows(),
              routing.firstRows()));
        }
      }
      return fillers.get(code);
    }

    void skipRows(int rows) {
      skippedRows += rows;
    }

    KeyedPartial<A> finish(int partition) {
      List<KeyValues> keys = new ArrayList<>();
      List<PartialResult<A>> partials = new ArrayList<>();
      long rows = skippedRows;
      for (int c = 0; c < coder.count(); c++) {
        BlockFiller<A> f = filler(c);
        if (f == null || f == rest) {
          continue;
        }
        PartialResult<A> p = f.finish();
        keys.add(coder.key(c));
        partials.add(p);
        rows += p.counts().rowsRead();
      }
      if (routing.pooled()) {
        // the keys' partials in the order they appeared, then the rest; the aggregator's merge folds its right
        // side into its left and leaves the right unchanged (summaries do), so the keys' partials stay as they are
        BlockAggregator<A> agg = spec.aggregator();
        PartialResult<A> pooled = new PartialResult<>(new ReadCounts(spec.d()), agg.zero());
        List<PartialResult<A>> all = new ArrayList<>(partials);
        if (rest != null) {
          PartialResult<A> r = rest.finish();
          rows += r.counts().rowsRead();
          all.add(r);
        }
        for (PartialResult<A> p : all) {
          pooled = new PartialResult<>(pooled.counts().merge(p.counts()), agg.merge(pooled.value(), p.value()));
        }
        keys.add(POOLED);
        partials.add(pooled);
      }
      spec.rowsRead().add(rows);
      return new KeyedPartial<>(partition, keys, partials);
    }
  }

  /** Reads columnar batches: features at {@code ordinals} (types {@code kinds}), keys at {@code keyOrdinals}. */
  static final class ColumnarKeyed<A extends Serializable>
      implements Function2<Integer, Iterator<ColumnarBatch>, Iterator<KeyedPartial<A>>> {
    private static final long serialVersionUID = 1L;
    private final PartitionPasses.PassSpec<A> spec;
    private final int[] ordinals;
    private final int[] kinds;
    private final int[] keyOrdinals;
    private final KeyColumns keys;
    private final Routing routing;

    ColumnarKeyed(PartitionPasses.PassSpec<A> spec, int[] ordinals, int[] kinds, int[] keyOrdinals,
        KeyColumns keys, Routing routing) {
      this.spec = spec;
      this.ordinals = ordinals;
      this.kinds = kinds;
      this.keyOrdinals = keyOrdinals;
      this.keys = keys;
      this.routing = routing;
    }

    @Override
    public Iterator<KeyedPartial<A>> call(Integer partition, Iterator<ColumnarBatch> batches) {
      KeyColumns.Coder coder = keys.coder();
      Router<A> router = new Router<>(spec, routing, coder);
      ColumnVector[] vectors = new ColumnVector[ordinals.length];
      ColumnVector[] keyVectors = new ColumnVector[keyOrdinals.length];
      BatchScratch scratch = new BatchScratch(ordinals.length, scratchRows(ordinals.length));
      int[] codes = new int[scratch.capacity()];
      int[] order = new int[scratch.capacity()];
      while (batches.hasNext()) {
        ColumnarBatch batch = batches.next();
        for (int j = 0; j < ordinals.length; j++) {
          vectors[j] = batch.column(ordinals[j]);
        }
        for (int c = 0; c < keyOrdinals.length; c++) {
          keyVectors[c] = batch.column(keyOrdinals[c]);
        }
        int rows = batch.numRows();
        int at = 0;
        while (at < rows) {
          // rows held back at most: about 32 a key met so far (at least a batch), within the scratch
          int limit = Math.min(scratch.capacity(), Math.max(4096, 32 * coder.count()));
          if (scratch.rows() >= limit) {
            scratch.drain(codes, order, coder.count(), router);
          }
          int t = Math.min(rows - at, limit - scratch.rows());
          int base = scratch.rows();
          boolean uniform = true;
          for (int r = 0; r < t; r++) {
            codes[base + r] = coder.code(keyVectors, at + r);
            uniform &= codes[base + r] == codes[base];
          }
          if (uniform && base == 0) {
            // one key and nothing held back: the rows go straight into the key's block, as in an unkeyed pass
            BlockFiller<A> f = router.filler(codes[0]);
            if (f == null) {
              router.skipRows(t);
            } else {
              PartitionPasses.copyRows(vectors, kinds, at, t, f);
            }
          } else {
            scratch.append(vectors, kinds, at, t);
          }
          at += t;
        }
      }
      scratch.drain(codes, order, coder.count(), router);
      return List.of(router.finish(partition)).iterator();
    }
  }

  /** Rows per key of one partition: {@code rows[i]} rows have key {@code keys.get(i)}. */
  public record KeyCounts(List<KeyValues> keys, long[] rows) implements Serializable {}

  /**
   * Counts a partition's rows per key from columnar batches of the key columns ({@code keyOrdinals}), with the
   * coder the keyed pass uses: the counted keys are the keys the pass meets, text for text.
   */
  static final class CountKeys implements org.apache.spark.api.java.function.FlatMapFunction<Iterator<ColumnarBatch>,
      KeyCounts> {
    private static final long serialVersionUID = 1L;
    private final int[] keyOrdinals;
    private final KeyColumns keys;

    CountKeys(int[] keyOrdinals, KeyColumns keys) {
      this.keyOrdinals = keyOrdinals;
      this.keys = keys;
    }

    @Override
    public Iterator<KeyCounts> call(Iterator<ColumnarBatch> batches) {
      KeyColumns.Coder coder = keys.coder();
      ColumnVector[] keyVectors = new ColumnVector[keyOrdinals.length];
      long[] rows = new long[16];
      while (batches.hasNext()) {
        ColumnarBatch batch = batches.next();
        for (int c = 0; c < keyOrdinals.length; c++) {
          keyVectors[c] = batch.column(keyOrdinals[c]);
        }
        int n = batch.numRows();
        for (int r = 0; r < n; r++) {
          int code = coder.code(keyVectors, r);
          if (code >= rows.length) {
            rows = Arrays.copyOf(rows, Math.max(code + 1, 2 * rows.length));
          }
          rows[code]++;
        }
      }
      List<KeyValues> met = new ArrayList<>(coder.count());
      for (int c = 0; c < coder.count(); c++) {
        met.add(coder.key(c));
      }
      return List.of(new KeyCounts(met, Arrays.copyOf(rows, coder.count()))).iterator();
    }
  }

  /** Bytes of decoded rows a task holds back before ordering them by key (see {@link BatchScratch}). */
  public static final long SCRATCH_BYTES = 16L << 20;

  /**
   * Rows of a task's scratch at d features: {@link #SCRATCH_BYTES} of doubles, at least one batch of the Parquet
   * reader (4,096 rows) and at most 32,768 rows. With g keys mixed in every batch each key gets about rows / g rows
   * a drain: 20,971 rows at d = 100 give a key of 1,000 about 21 contiguous values per column, where a batch gave 4.
   * A task holds back about 32 rows per key it has met (at least 4,096): few keys drain every batch, as before, from a
   * scratch that stays in cache.
   */
  public static int scratchRows(int d) {
    return (int) Math.max(4096, Math.min(32_768, SCRATCH_BYTES / (8L * Math.max(1, d))));
  }

  /**
   * Rows of mixed keys decoded to doubles (column-major, leading dimension the scratch's capacity), a missing cell
   * (null, NaN or infinite) as NaN, held until the scratch is full or the partition ends; then ordered by key code
   * (stable) and gathered into the keys' blocks ({@link #drain}). The values are the block reader's
   * ({@link PartitionPasses#copyColumn} with no origin: x - 0 is x), and a block's origin is subtracted when
   * gathering, so a gathered block holds the same bits as a block copied from the batch; each key's rows reach its
   * block in the table's order, so the blocks, and the sums, are those of a pass over the key's rows alone.
   *
   * <p>Why hold rows back: with many keys a batch gives each key a few rows, and gathering them wrote a few values
   * into each of d columns of each key's block, a cache line touched per value. The drain goes column by column
   * (outer) and key by key (inner): the scratch's column stays in cache while every key takes its rows of that
   * column, contiguous in the key's block.
   */
  static final class BatchScratch implements BlockSink {
    private final int d;
    private final int capacity;
    /** Allocated when rows are first held back (a pass whose batches each have one key never needs it). */
    private double[] values;
    private int rows;
    /** Row of the scratch where the slice being appended starts. */
    private int base;

    BatchScratch(int d, int capacity) {
      this.d = d;
      this.capacity = capacity;
    }

    int capacity() {
      return capacity;
    }

    int rows() {
      return rows;
    }

    /** Decodes rows {@code start .. start + count - 1} of the batch's feature vectors after the rows held. */
    void append(ColumnVector[] vectors, int[] kinds, int start, int count) {
      if (values == null) {
        values = new double[d * capacity];
      }
      base = rows;
      for (int j = 0; j < d; j++) {
        PartitionPasses.copyColumn(vectors[j], kinds[j], start, count, this, j);
      }
      rows += count;
    }

    /**
     * Hands every row held to its key's block (row r has key code {@code codes[r]}), then empties the scratch.
     * Rounds: each key with rows left takes what its block has room for, the columns are gathered for all those
     * keys, each key commits (a full block goes to the aggregator); a key whose block filled goes on next round.
     */
    <A extends Serializable> void drain(int[] codes, int[] order, int keys, Router<A> router) {
      if (rows == 0) {
        return;
      }
      int[] starts = orderByCode(codes, rows, keys, order);
      int[] next = Arrays.copyOf(starts, keys);
      int[] from = new int[keys];
      int[] take = new int[keys];
      ColumnBlock[] blocks = new ColumnBlock[keys];
      int[] active = new int[keys];
      while (true) {
        int n = 0;
        for (int c = 0; c < keys; c++) {
          int left = starts[c + 1] - next[c];
          if (left == 0) {
            continue;
          }
          BlockFiller<A> f = router.filler(c);
          if (f == null) {
            router.skipRows(left);
            next[c] += left;
            continue;
          }
          take[c] = f.room(left);
          from[c] = next[c];
          blocks[c] = f.block();
          active[n++] = c;
        }
        if (n == 0) {
          break;
        }
        for (int j = 0; j < d; j++) {
          int src = j * capacity;
          for (int a = 0; a < n; a++) {
            int c = active[a];
            ColumnBlock block = blocks[c];
            double[] dst = block.block();
            double[] origin = block.origin();
            double o = origin == null ? 0.0 : origin[j];
            int off = j * block.ld() + block.base();
            gatherColumn(values, src, order, from[c], take[c], dst, off, o, block, j);
          }
        }
        for (int a = 0; a < n; a++) {
          int c = active[a];
          router.filler(c).commit(take[c]);
          next[c] += take[c];
        }
      }
      rows = 0;
    }

    /**
     * Rows {@code order[first .. first + t - 1]} of the scratch column at {@code src} into {@code dst} from
     * {@code off}, minus {@code o}; a missing cell (NaN) marked in {@code block} at (i, j). A method of its own, called
     * once per key and column, so that the JIT compiles its loop as a whole method.
     */
    private static void gatherColumn(double[] values, int src, int[] order, int first, int t, double[] dst, int off,
        double o, ColumnBlock block, int j) {
      for (int i = 0; i < t; i++) {
        double x = values[src + order[first + i]];
        dst[off + i] = x - o;
        if (x != x) {
          block.markMissing(i, j);
        }
      }
    }

    @Override public double[] block() {
      return values;
    }

    @Override public int ld() {
      return capacity;
    }

    @Override public int base() {
      return base;
    }

    @Override public void markMissing(int i, int j) {
      values[j * capacity + base + i] = Double.NaN;
    }
  }

  /** Reads Rows: the d features cast to double, then the key columns cast to string. */
  static final class RowKeyed<A extends Serializable>
      implements Function2<Integer, Iterator<Row>, Iterator<KeyedPartial<A>>> {
    private static final long serialVersionUID = 1L;
    private final PartitionPasses.PassSpec<A> spec;
    private final KeyColumns keys;
    private final Routing routing;

    RowKeyed(PartitionPasses.PassSpec<A> spec, KeyColumns keys, Routing routing) {
      this.spec = spec;
      this.keys = keys;
      this.routing = routing;
    }

    @Override
    public Iterator<KeyedPartial<A>> call(Integer partition, Iterator<Row> rows) {
      KeyColumns.Coder coder = keys.coder();
      Router<A> router = new Router<>(spec, routing, coder);
      int d = spec.d();
      while (rows.hasNext()) {
        Row row = rows.next();
        BlockFiller<A> f = router.filler(coder.code(row, d));
        if (f == null) {
          router.skipRows(1);
        } else {
          PartitionPasses.RowPass.copyRow(row, d, f);
        }
      }
      return List.of(router.finish(partition)).iterator();
    }
  }

  /**
   * Orders the row numbers {@code 0 .. rows - 1} by their key code {@code codes[r]} (codes below {@code keys}), a
   * stable counting sort: {@code order} gets the rows of code 0 in their order, then those of code 1, ...; the
   * returned array's entries c and c + 1 bound code c's rows in {@code order}. O(rows + keys).
   */
  public static int[] orderByCode(int[] codes, int rows, int keys, int[] order) {
    int[] starts = new int[keys + 1];
    for (int r = 0; r < rows; r++) {
      starts[codes[r] + 1]++;
    }
    for (int c = 0; c < keys; c++) {
      starts[c + 1] += starts[c];
    }
    int[] next = Arrays.copyOf(starts, keys);
    for (int r = 0; r < rows; r++) {
      order[next[codes[r]]++] = r;
    }
    return starts;
  }

  /** Each key's partial of a partition as a record keyed by the key, with the partition index beside it. */
  static final class ByKey<A extends Serializable>
      implements PairFlatMapFunction<KeyedPartial<A>, KeyValues, Tuple2<Integer, PartialResult<A>>> {
    private static final long serialVersionUID = 1L;

    @Override
    public Iterator<Tuple2<KeyValues, Tuple2<Integer, PartialResult<A>>>> call(KeyedPartial<A> p) {
      List<Tuple2<KeyValues, Tuple2<Integer, PartialResult<A>>>> out = new ArrayList<>(p.keys().size());
      for (int i = 0; i < p.keys().size(); i++) {
        out.add(new Tuple2<>(p.keys().get(i), new Tuple2<>(p.partition(), p.partials().get(i))));
      }
      return out.iterator();
    }
  }

  /** Merges a key's partials (as {@link #mergeKey}) and finishes the key's result, on an executor. */
  static final class MergeAndFinish<A extends Serializable, R extends Serializable>
      implements org.apache.spark.api.java.function.Function<Tuple2<KeyValues,
          Iterable<Tuple2<Integer, PartialResult<A>>>>, R> {
    private static final long serialVersionUID = 1L;
    private final int partitions;
    private final BlockAggregator<A> aggregator;
    private final org.apache.spark.api.java.function.Function<Tuple2<KeyValues, PartialResult<A>>, R> finish;

    MergeAndFinish(int partitions, BlockAggregator<A> aggregator,
        org.apache.spark.api.java.function.Function<Tuple2<KeyValues, PartialResult<A>>, R> finish) {
      this.partitions = partitions;
      this.aggregator = aggregator;
      this.finish = finish;
    }

    @Override
    public R call(Tuple2<KeyValues, Iterable<Tuple2<Integer, PartialResult<A>>>> key) throws Exception {
      return finish.call(new Tuple2<>(key._1(), mergeKey(key._2(), partitions, aggregator)));
    }
  }

  /** Merges one key's partials (partition index, partial) in the unkeyed pass's tree over {@code partitions}. */
  public static <A extends Serializable> PartialResult<A> mergeKey(Iterable<Tuple2<Integer, PartialResult<A>>> parts,
      int partitions, BlockAggregator<A> aggregator) {
    List<PartialResult<A>> slots = new ArrayList<>(java.util.Collections.nCopies(partitions, null));
    for (Tuple2<Integer, PartialResult<A>> t : parts) {
      slots.set(t._1(), t._2());
    }
    return OrderedMerge.mergeSlots(slots, new PartitionPasses.MergePartials<>(aggregator));
  }

  /** Merges collected partitions' partials per key, on the driver; keys in the order they first appear. */
  static <A extends Serializable> Map<KeyValues, PartialResult<A>> mergeOnDriver(List<KeyedPartial<A>> collected,
      int partitions, BlockAggregator<A> aggregator) {
    Map<KeyValues, List<Tuple2<Integer, PartialResult<A>>>> byKey = new LinkedHashMap<>();
    for (KeyedPartial<A> p : collected) {
      for (int i = 0; i < p.keys().size(); i++) {
        byKey.computeIfAbsent(p.keys().get(i), k -> new ArrayList<>())
            .add(new Tuple2<>(p.partition(), p.partials().get(i)));
      }
    }
    Map<KeyValues, PartialResult<A>> merged = new LinkedHashMap<>();
    byKey.forEach((key, parts) -> merged.put(key, mergeKey(parts, partitions, aggregator)));
    return merged;
  }
}
