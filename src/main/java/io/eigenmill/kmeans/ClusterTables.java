package io.eigenmill.kmeans;

import io.eigenmill.io.CentroidStore;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.Metadata;
import org.apache.spark.sql.types.MetadataBuilder;
import org.apache.spark.sql.types.StructType;

/** Builds the small tables of a clustering run from its result record (on the driver, one partition each). */
public final class ClusterTables {
  private ClusterTables() {}

  /**
   * {@code cluster}, one column per dimension, {@code orig_<feature>} per feature. The {@code cluster} column's
   * metadata says what was clustered ({@link CentroidStore#ENTITY}, {@link CentroidStore#SPREAD},
   * {@link CentroidStore#SPACE}), so that an apply job labels the same kind of point (Parquet keeps it in the
   * footer's Spark schema).
   */
  public static Dataset<Row> centroids(SparkSession spark, ClusterResult r) {
    Metadata kind = new MetadataBuilder().putString(CentroidStore.ENTITY, r.entity() == null ? "" : r.entity())
        .putBoolean(CentroidStore.SPREAD, spread(r)).putString(CentroidStore.SPACE, r.space().word()).build();
    StructType schema = new StructType().add("cluster", DataTypes.IntegerType, false, kind);
    for (String dim : r.dimensions()) {
      schema = schema.add(dim, DataTypes.DoubleType, false);
    }
    for (String f : r.features()) {
      schema = schema.add("orig_" + f, DataTypes.DoubleType, false);
    }
    List<Row> rows = new ArrayList<>();
    for (int c = 0; c < r.k(); c++) {
      Object[] v = new Object[1 + r.dimensions().size() + r.features().size()];
      v[0] = c;
      int at = 1;
      for (double x : r.centroids()[c]) {
        v[at++] = x;
      }
      for (double x : r.centroidsOriginal()[c]) {
        v[at++] = x;
      }
      rows.add(RowFactory.create(v));
    }
    return spark.createDataFrame(rows, schema).coalesce(1);
  }

  /** Entity points with their spread: the dimensions are c_1..c_p followed by c_1_sd..c_p_sd. */
  private static boolean spread(ClusterResult r) {
    List<String> dims = r.dimensions();
    if (r.entity() == null || r.entity().isEmpty() || dims.size() % 2 != 0) {
      return false;
    }
    int p = dims.size() / 2;
    for (int i = 0; i < p; i++) {
      if (!dims.get(p + i).equals(dims.get(i) + "_sd")) {
        return false;
      }
    }
    return true;
  }

  /** One row per cluster and distinguishing feature. */
  public static Dataset<Row> profiles(SparkSession spark, ClusterResult r) {
    StructType schema = new StructType()
        .add("cluster", DataTypes.IntegerType, false)
        .add("size", DataTypes.LongType, false)
        .add("share", DataTypes.DoubleType, false)
        .add("rank", DataTypes.IntegerType, false)
        .add("feature", DataTypes.StringType, false)
        .add("cluster_mean", DataTypes.DoubleType, false)
        .add("overall_mean", DataTypes.DoubleType, false)
        .add("standardized_difference", DataTypes.DoubleType, false);
    List<Row> rows = new ArrayList<>();
    for (ClusterResult.Profile p : r.profiles()) {
      int rank = 1;
      for (ClusterResult.FeatureShift s : p.distinguishing()) {
        rows.add(RowFactory.create(p.cluster(), p.size(), p.share(), rank++, s.feature(), s.clusterMean(),
            s.overallMean(), s.standardizedDifference()));
      }
    }
    return spark.createDataFrame(rows, schema).coalesce(1);
  }

  /**
   * One row per k tried.
   *
   * @param sizes per entry of {@code r.selection()}, the cluster sizes of that k's best run
   */
  public static Dataset<Row> kSelection(SparkSession spark, ClusterResult r, List<long[]> sizes) {
    StructType schema = new StructType()
        .add("k", DataTypes.IntegerType, false)
        .add("wcss", DataTypes.DoubleType, false)
        .add("silhouette", DataTypes.DoubleType, false)
        .add("calinski_harabasz", DataTypes.DoubleType, false)
        .add("davies_bouldin", DataTypes.DoubleType, false)
        .add("chosen", DataTypes.BooleanType, false)
        .add("sizes", DataTypes.createArrayType(DataTypes.LongType, false), false)
        .add("restarts_run", DataTypes.IntegerType, true)
        .add("restarts_at_best", DataTypes.IntegerType, true)
        .add("restarts_wcss_min", DataTypes.DoubleType, true)
        .add("restarts_wcss_median", DataTypes.DoubleType, true)
        .add("restarts_wcss_max", DataTypes.DoubleType, true);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < r.selection().size(); i++) {
      ClusterResult.KScore s = r.selection().get(i);
      long[] sorted = sizes.get(i).clone();
      Arrays.sort(sorted);
      Long[] descending = new Long[sorted.length];
      for (int c = 0; c < sorted.length; c++) {
        descending[c] = sorted[sorted.length - 1 - c];
      }
      ClusterResult.Restarts rs = s.restarts();
      rows.add(RowFactory.create(s.k(), s.wcss(), s.silhouette(), s.calinskiHarabasz(), s.daviesBouldin(),
          s.k() == r.k(), descending, rs == null ? null : rs.run(), rs == null ? null : rs.atBest(),
          rs == null ? null : rs.min(), rs == null ? null : rs.median(), rs == null ? null : rs.max()));
    }
    return spark.createDataFrame(rows, schema).coalesce(1);
  }
}
