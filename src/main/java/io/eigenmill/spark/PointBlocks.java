package io.eigenmill.spark;

import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.storage.StorageLevel;

/**
 * Turns the points table into the executor-side cache that every clustering pass reads: one {@link PointBlock} per
 * {@code blockRows} rows, persisted deserialized in memory ({@code MEMORY_ONLY}), so the k-means|| rounds and the
 * Lloyd iterations never go back to Parquet. The cache is filled by the first pass that reads it. A partition that
 * does not fit in memory is recomputed from the input by each pass that needs it (Spark's rule for MEMORY_ONLY);
 * size executors so that n x d x 8 bytes fit. Memory: (d + 1) x 8 bytes per row.
 */
public final class PointBlocks {
  private PointBlocks() {}

  /**
   * @param frame column 0 the row identity (long, not null), columns 1..d the coordinates as doubles
   * @return the persisted blocks; the caller unpersists them
   */
  public static JavaRDD<PointBlock> cache(Dataset<Row> frame, int d, int blockRows) {
    // the executed plan's internal rows: no conversion to external Rows (the rows may be reused by the iterator;
    // their values are copied at once)
    JavaRDD<PointBlock> blocks = frame.queryExecution().toRdd().toJavaRDD().mapPartitions(new BuildBlocks(d,
        blockRows));
    blocks.setName("eigenmill clustered points (" + d + " dimensions)");
    return blocks.persist(StorageLevel.MEMORY_ONLY());
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
      double[] values = new double[capacity * d];
      long[] ids = new long[capacity];
      int fill = 0;
      long skipped = 0;
      while (rows.hasNext()) {
        InternalRow row = rows.next();
        if (!copy(row, values, fill)) {
          skipped++;
          continue;
        }
        ids[fill++] = row.getLong(0);
        if (fill == capacity) {
          out.add(trimmed(values, ids, fill, skipped));
          fill = 0;
          skipped = 0;
        }
      }
      if (fill > 0 || skipped > 0) {
        out.add(trimmed(values, ids, fill, skipped));
      }
      return out.iterator();
    }

    private boolean copy(InternalRow row, double[] values, int at) {
      for (int l = 0; l < d; l++) {
        if (row.isNullAt(l + 1)) {
          return false;
        }
        double v = row.getDouble(l + 1);
        if (v - v != 0.0) { // NaN or infinite
          return false;
        }
        values[at + l * capacity] = v;
      }
      return true;
    }

    private PointBlock trimmed(double[] values, long[] ids, int rows, long skipped) {
      double[] v = new double[rows * d];
      for (int l = 0; l < d; l++) {
        System.arraycopy(values, l * capacity, v, l * rows, rows);
      }
      return new PointBlock(rows, d, v, java.util.Arrays.copyOf(ids, rows), skipped);
    }
  }
}
