package io.eigenmill.kmeans;

import io.eigenmill.engine.ColumnBlock;
import io.eigenmill.engine.ColumnarScan;
import io.eigenmill.engine.PartitionPasses;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.XXH64;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.apache.spark.storage.StorageLevel;

/**
 * Turns the points table into the executor-side cache that every clustering pass reads: one {@link PointBlock} per
 * {@code blockRows} rows, persisted deserialized in memory ({@code MEMORY_ONLY}), so the k-means|| rounds and the
 * Lloyd iterations never go back to Parquet. The cache is filled by the first pass that reads it. A partition that
 * does not fit in memory is recomputed from the input by each pass that needs it (Spark's rule for MEMORY_ONLY);
 * size executors so that n x d x 8 bytes fit. Memory: (d + 1) x 8 bytes per row.
 *
 * <p>Two readers fill the cache. When the coordinates are plain columns of a columnar scan (Parquet, or a table
 * cached in memory), the blocks are copied column by column from Spark's columnar batches, and each row's identity
 * is computed here with Spark's own {@code xxhash64} arithmetic ({@link #identity}); otherwise the rows of the
 * executed plan are copied one by one, with the identity computed by Spark. Both give the same blocks.
 */
public final class PointBlocks {
  /** The seed of Spark's {@code xxhash64} function. */
  static final long HASH_SEED = 42L;

  private PointBlocks() {}

  /**
   * @param frame column 0 the row identity ({@code xxhash64} of the identity columns, not null), columns 1..d the
   *     coordinates as doubles
   * @param coordinates the same rows' coordinates alone as plain columns (same names and order), when the identity
   *     is the hash of the coordinates; null otherwise. Used only when a columnar scan serves it.
   * @return the persisted blocks; the caller unpersists them
   */
  public static JavaRDD<PointBlock> cache(Dataset<Row> frame, Dataset<Row> coordinates, int d, int blockRows) {
    JavaRDD<PointBlock> blocks = coordinates == null ? null : columnar(coordinates, d, blockRows);
    if (blocks == null) {
      // the executed plan's internal rows: no conversion to external Rows (the rows may be reused by the iterator;
      // their values are copied at once)
      blocks = frame.queryExecution().toRdd().toJavaRDD().mapPartitions(new BuildBlocks(d, blockRows));
    }
    blocks.setName("eigenmill clustered points (" + d + " dimensions)");
    return blocks.persist(StorageLevel.MEMORY_ONLY());
  }

  /** Blocks straight from the columnar batches of the scan under {@code coordinates}, or null when there is none. */
  private static JavaRDD<PointBlock> columnar(Dataset<Row> coordinates, int d, int blockRows) {
    ColumnarScan scan = ColumnarScan.of(coordinates);
    if (scan == null) {
      return null;
    }
    int[] ordinals = scan.ordinals(Arrays.asList(coordinates.columns()));
    if (ordinals == null || ordinals.length != d) {
      return null;
    }
    int[] kinds = scan.kinds(ordinals);
    for (int k : kinds) {
      if (k < 0) {
        return null;
      }
    }
    return scan.batches().mapPartitions(new BuildFromBatches(d, blockRows, ordinals, kinds));
  }

  /**
   * Spark's {@code xxhash64} of one double with seed {@code seed}: XXH64 of the value's bits, with both zeros hashed
   * as the bits of +0.0 (Spark's rule, so that -0.0 and 0.0 hash alike). Folding it over the columns in order, from
   * {@link #HASH_SEED}, gives {@code xxhash64(c1, ..., cd)} of a row.
   */
  static long identity(double v, long seed) {
    return XXH64.hashLong(v == 0.0 ? 0L : Double.doubleToLongBits(v), seed);
  }

  /** Copies batches into column-major blocks; rows with a null or non-finite coordinate are counted, not kept. */
  static final class BuildFromBatches implements FlatMapFunction<Iterator<ColumnarBatch>, PointBlock> {
    private static final long serialVersionUID = 1L;
    private final int d;
    private final int capacity;
    private final int[] ordinals;
    private final int[] kinds;

    BuildFromBatches(int d, int capacity, int[] ordinals, int[] kinds) {
      this.d = d;
      this.capacity = capacity;
      this.ordinals = ordinals;
      this.kinds = kinds;
    }

    @Override
    public Iterator<PointBlock> call(Iterator<ColumnarBatch> batches) {
      Collector sink = new Collector(d, capacity);
      PartitionPasses.copyBatches(batches, ordinals, kinds, sink);
      sink.emit();
      return sink.out.iterator();
    }
  }

  /** The block being filled by {@link BuildFromBatches}, and the blocks done. */
  static final class Collector implements PartitionPasses.SliceSink {
    private final int d;
    private final int capacity;
    /** The block being filled: a full one is handed over as it is and a new one allocated (no copy). */
    private final ColumnBlock block;
    private long[] ids;
    private long skipped;
    final List<PointBlock> out = new ArrayList<>();

    Collector(int d, int capacity) {
      this.d = d;
      this.capacity = capacity;
      this.block = ColumnBlock.dropping(d, capacity);
      this.ids = new long[capacity];
    }

    @Override
    public ColumnBlock block() {
      return block;
    }

    @Override
    public int room(int wanted) {
      return block.room(wanted);
    }

    /** Keeps the complete rows of the {@code t} written at the block's base, with their identities. */
    @Override
    public void commit(int t) {
      int fill = block.rows();
      int kept = block.commit(t, null);
      skipped += t - kept;
      double[] values = block.block();
      Arrays.fill(ids, fill, fill + kept, HASH_SEED);
      for (int l = 0; l < d; l++) {
        int off = l * capacity;
        for (int i = fill; i < fill + kept; i++) {
          ids[i] = identity(values[off + i], ids[i]);
        }
      }
      if (block.isFull()) {
        emit();
      }
    }

    /** Closes the block being filled (when it holds rows or skipped ones). */
    void emit() {
      int fill = block.rows();
      if (block.isFull()) {
        out.add(new PointBlock(fill, d, block.handOver(), ids, skipped));
        ids = new long[capacity];
      } else if (fill > 0 || skipped > 0) {
        out.add(trimmed(block.block(), ids, fill, skipped, d, capacity));
      }
      block.clear();
      skipped = 0;
    }
  }

  /** Copies rows into column-major blocks; rows with a null or non-finite coordinate are counted, not kept. */
  static final class BuildBlocks implements FlatMapFunction<Iterator<InternalRow>, PointBlock> {
    private static final long serialVersionUID = 1L;
    private final int d;
    private final int capacity;

    BuildBlocks(int d, int capacity) {
      this.d = d;
      this.capacity = capacity;
    }

    @Override
    public Iterator<PointBlock> call(Iterator<InternalRow> rows) {
      List<PointBlock> out = new ArrayList<>();
      ColumnBlock block = ColumnBlock.dropping(d, capacity);
      long[] ids = new long[capacity];
      long skipped = 0;
      while (rows.hasNext()) {
        InternalRow row = rows.next();
        copy(row, block);
        if (block.commit(1, null) == 0) {
          skipped++;
          continue;
        }
        ids[block.rows() - 1] = row.getLong(0);
        if (block.isFull()) {
          out.add(trimmed(block.block(), ids, block.rows(), skipped, d, capacity));
          block.clear();
          skipped = 0;
        }
      }
      if (block.rows() > 0 || skipped > 0) {
        out.add(trimmed(block.block(), ids, block.rows(), skipped, d, capacity));
      }
      return out.iterator();
    }

    /** Writes the row's coordinates at the block's base; a null or non-finite one marks the row missing. */
    private void copy(InternalRow row, ColumnBlock block) {
      double[] values = block.block();
      int at = block.base();
      for (int l = 0; l < d; l++) {
        if (row.isNullAt(l + 1)) {
          block.markMissing(0, l);
          return;
        }
        double v = row.getDouble(l + 1);
        values[at + l * capacity] = v;
        if (v - v != 0.0) { // NaN or infinite
          block.markMissing(0, l);
          return;
        }
      }
    }
  }

  /** The first {@code rows} rows of a column-major buffer (leading dimension {@code capacity}) as a block. */
  static PointBlock trimmed(double[] values, long[] ids, int rows, long skipped, int d, int capacity) {
    double[] v = new double[rows * d];
    for (int l = 0; l < d; l++) {
      System.arraycopy(values, l * capacity, v, l * rows, rows);
    }
    return new PointBlock(rows, d, v, Arrays.copyOf(ids, rows), skipped);
  }
}
