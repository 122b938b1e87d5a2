package io.eigenmill.kmeans;

import io.eigenmill.kmeans.math.NearestSearch;
import io.eigenmill.plan.ClusterColumns;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Iterator;
import java.util.List;
import java.util.NoSuchElementException;
import org.apache.spark.api.java.function.MapPartitionsFunction;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Encoders;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;

/**
 * Labels rows with their nearest centroid: the assignments of a clustering run, and saved centroids applied to new
 * data. Rows are read in chunks of up to {@link #CHUNK_ROWS} into one column-major scratch matrix per partition,
 * shifted by the mean of the centroids, and searched with {@link NearestSearch} (one dgemm per chunk); reported
 * distances are exact Euclidean distances. A row with a null, NaN or infinite coordinate gets null cluster and
 * distances. Lazy: nothing runs until the result is used.
 */
public final class NearestCentroid {
  /** Rows per search chunk. */
  static final int CHUNK_ROWS = 512;

  private NearestCentroid() {}

  /**
   * Adds {@code cluster} (int, the row index in {@code centroids}) and {@code distance} (Euclidean, to that
   * centroid) to every row of {@code points}; all other columns are kept.
   *
   * @param centroids {@code centroids[c]} has one value per point column, in order
   * @throws IllegalArgumentException when {@code points} already has a column {@code cluster} or {@code distance},
   *     or the centroids do not match the point columns
   */
  public static Dataset<Row> label(Dataset<Row> points, List<String> pointColumns, double[][] centroids) {
    List<String> names = Arrays.asList(points.columns());
    for (String taken : List.of(ClusterColumns.CLUSTER, ClusterColumns.DISTANCE)) {
      if (names.contains(taken)) {
        throw new IllegalArgumentException("the rows to label already have a column named " + taken
            + "; rename or drop it first");
      }
    }
    return assign(points, names, pointColumns, centroids, false);
  }

  /**
   * The assignments table of a clustering run: the columns {@code keep} of {@code source}, {@code cluster},
   * {@code distance} and {@code second_distance} (null when there is one centroid).
   */
  public static Dataset<Row> assignments(Dataset<Row> source, List<String> keep, List<String> pointColumns,
      double[][] centroids) {
    return assign(source, keep, pointColumns, centroids, true);
  }

  /**
   * The columns {@code keep} of {@code source} followed by {@code cluster}, {@code distance} and, when
   * {@code second}, {@code second_distance} (to the second-nearest centroid; null when there is one centroid).
   */
  static Dataset<Row> assign(Dataset<Row> source, List<String> keep, List<String> pointColumns,
      double[][] centroids, boolean second) {
    int p = pointColumns.size();
    int k = centroids.length;
    if (k == 0) {
      throw new IllegalArgumentException("no centroids to label rows with");
    }
    double[] shift = new double[p];
    for (double[] c : centroids) {
      if (c.length != p) {
        throw new IllegalArgumentException("a centroid has " + c.length + " values but there are " + p
            + " point columns " + pointColumns);
      }
      for (int l = 0; l < p; l++) {
        shift[l] += c[l] / k;
      }
    }
    double[] flat = new double[k * p];
    for (int c = 0; c < k; c++) {
      for (int l = 0; l < p; l++) {
        flat[c * p + l] = centroids[c][l] - shift[l];
      }
    }
    List<Column> cols = new ArrayList<>();
    List<StructField> fields = new ArrayList<>();
    StructType schema = source.schema();
    for (String name : keep) {
      cols.add(functions.col(quoted(name)));
      fields.add(schema.apply(name));
    }
    for (int l = 0; l < p; l++) {
      cols.add(functions.col(quoted(pointColumns.get(l))).cast("double").as("__eigenmill_point_" + l));
    }
    fields.add(DataTypes.createStructField(ClusterColumns.CLUSTER, DataTypes.IntegerType, true));
    fields.add(DataTypes.createStructField(ClusterColumns.DISTANCE, DataTypes.DoubleType, true));
    if (second) {
      fields.add(DataTypes.createStructField(ClusterColumns.SECOND_DISTANCE, DataTypes.DoubleType, true));
    }
    StructType out = DataTypes.createStructType(fields);
    return source.select(cols.toArray(new Column[0]))
        .mapPartitions(new LabelRows(keep.size(), p, k, flat, shift, second), Encoders.row(out));
  }

  /** A column name as Spark SQL must see it to take it literally (dots, spaces, backticks). */
  public static String quoted(String name) {
    return "`" + name.replace("`", "``") + "`";
  }

  static final class LabelRows implements MapPartitionsFunction<Row, Row> {
    private static final long serialVersionUID = 1L;
    private final int keep;
    private final int p;
    private final int k;
    private final double[] centroids;
    private final double[] shift;
    private final boolean second;

    LabelRows(int keep, int p, int k, double[] centroids, double[] shift, boolean second) {
      this.keep = keep;
      this.p = p;
      this.k = k;
      this.centroids = centroids;
      this.shift = shift;
      this.second = second;
    }

    @Override
    public Iterator<Row> call(Iterator<Row> rows) {
      NearestSearch search = new NearestSearch(p, centroids, new int[] {0, k}, CHUNK_ROWS, second);
      return new Labeller(rows, search, keep, p, shift, second);
    }
  }

  /** Reads a chunk, searches it, hands out its labelled rows, reads the next chunk. */
  static final class Labeller implements Iterator<Row> {
    private final Iterator<Row> in;
    private final NearestSearch search;
    private final int keep;
    private final int p;
    private final double[] shift;
    private final boolean second;
    private final Object[][] pending;
    private final boolean[] valid;
    private final double[] x;
    private int filled;
    private int next;

    Labeller(Iterator<Row> in, NearestSearch search, int keep, int p, double[] shift, boolean second) {
      this.in = in;
      this.search = search;
      this.keep = keep;
      this.p = p;
      this.shift = shift;
      this.second = second;
      this.pending = new Object[search.chunk()][];
      this.valid = new boolean[search.chunk()];
      this.x = new double[search.chunk() * p];
    }

    @Override
    public boolean hasNext() {
      if (next < filled) {
        return true;
      }
      fill();
      return filled > 0;
    }

    private void fill() {
      int chunk = search.chunk();
      filled = 0;
      next = 0;
      while (filled < chunk && in.hasNext()) {
        Row row = in.next();
        Object[] out = new Object[keep + (second ? 3 : 2)];
        for (int c = 0; c < keep; c++) {
          out[c] = row.get(c);
        }
        boolean ok = true;
        for (int l = 0; l < p; l++) {
          double v = row.isNullAt(keep + l) ? Double.NaN : row.getDouble(keep + l);
          ok &= v - v == 0.0;
          x[filled + l * chunk] = v - v == 0.0 ? v - shift[l] : 0.0;
        }
        pending[filled] = out;
        valid[filled++] = ok;
      }
      search.search(x, 0, filled, chunk);
    }

    @Override
    public Row next() {
      if (!hasNext()) {
        throw new NoSuchElementException();
      }
      int i = next++;
      Object[] out = pending[i];
      pending[i] = null;
      if (valid[i]) {
        out[keep] = search.nearest(0, i);
        out[keep + 1] = Math.sqrt(search.distance2(0, i));
        if (second) {
          double s2 = search.secondDistance2(0, i);
          out[keep + 2] = Double.isNaN(s2) ? null : Math.sqrt(s2);
        }
      }
      return RowFactory.create(out);
    }
  }
}
