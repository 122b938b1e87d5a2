package io.eigenmill.io;

import io.eigenmill.kmeans.NearestCentroid;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.InvalidJobException;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.Metadata;
import org.apache.spark.sql.types.NumericType;
import org.apache.spark.sql.types.StructField;

/**
 * Reads a {@code centroids/} table written by a clustering run, to label new rows with {@link NearestCentroid}.
 * The table has an int column {@code cluster} numbering the rows 0..k-1, one column per dimension of the clustered
 * space (in order), and {@code orig_<feature>} columns (original units; ignored here).
 */
public final class CentroidStore {
  private CentroidStore() {}

  /** Metadata key of the {@code cluster} column: the entity column clustered, "" for rows. */
  public static final String ENTITY = "eigenmill.entity";
  /** Metadata key: true when entity points carry the sd of each coordinate ({@code cluster.entity-spread}). */
  public static final String SPREAD = "eigenmill.entity_spread";
  /** Metadata key: the clustered space, "scores" or "features". */
  public static final String SPACE = "eigenmill.space";

  /**
   * The centroids in the clustered space, row c being cluster c, the names of their dimensions, and what was
   * clustered.
   *
   * @param entity the entity column whose aggregates were clustered, "" for rows (also for centroids written before
   *     the table said so)
   * @param spread entity points are the means followed by the sds of the first half of {@code dimensions}
   * @param space the clustered space; scores when the table does not say (centroids written before it did)
   */
  public record StoredCentroids(List<String> dimensions, double[][] centroids, String entity, boolean spread,
      ClusterSpace space) {

    /** The coordinates whose per-entity means (and sds) are the dimensions. */
    public List<String> pointColumns() {
      return spread ? dimensions.subList(0, dimensions.size() / 2) : dimensions;
    }
  }

  /**
   * Reads the centroids at {@code path}: a {@code centroids/} folder, or a folder holding one (a run's
   * {@code clusters/} output).
   *
   * @throws InvalidJobException naming the path when it does not exist or is not a centroids table
   */
  public static StoredCentroids read(SparkSession spark, String path) {
    String table = TableLoader.exists(spark, path + "/centroids") ? path + "/centroids" : path;
    if (!TableLoader.exists(spark, table)) {
      throw new InvalidJobException("centroids " + path + ": no such file or folder");
    }
    Dataset<Row> frame;
    List<Row> rows;
    try {
      frame = spark.read().parquet(table);
      rows = frame.orderBy("cluster").collectAsList();
    } catch (RuntimeException e) {
      throw new InvalidJobException("centroids " + path + ": not a readable centroids table (Parquet with a"
          + " cluster column): " + TableLoader.firstLine(e));
    }
    List<String> dims = new ArrayList<>();
    List<Integer> ordinals = new ArrayList<>();
    StructField[] fields = frame.schema().fields();
    for (int i = 0; i < fields.length; i++) {
      String name = fields[i].name();
      if (name.equals("cluster") || name.startsWith("orig_")) {
        continue;
      }
      if (!(fields[i].dataType() instanceof NumericType)) {
        throw new InvalidJobException("centroids " + path + ": column " + name + " is "
            + fields[i].dataType().simpleString() + ", expected a number (a dimension of the clustered space)");
      }
      dims.add(name);
      ordinals.add(i);
    }
    if (dims.isEmpty() || rows.isEmpty()) {
      throw new InvalidJobException("centroids " + path + ": " + (rows.isEmpty() ? "no rows" : "no dimension"
          + " columns") + "; expected a centroids table written by a clustering run");
    }
    int cluster = frame.schema().fieldIndex("cluster");
    double[][] centroids = new double[rows.size()][dims.size()];
    for (int c = 0; c < rows.size(); c++) {
      Row r = rows.get(c);
      if (r.isNullAt(cluster) || ((Number) r.get(cluster)).intValue() != c) {
        throw new InvalidJobException("centroids " + path + ": the cluster column must number the rows 0.."
            + (rows.size() - 1) + " without gaps; row " + c + " has " + r.get(cluster));
      }
      for (int l = 0; l < dims.size(); l++) {
        Object v = r.get(ordinals.get(l));
        double x = v == null ? Double.NaN : ((Number) v).doubleValue();
        if (x - x != 0.0) {
          throw new InvalidJobException("centroids " + path + ": cluster " + c + " has no finite value in "
              + dims.get(l));
        }
        centroids[c][l] = x;
      }
    }
    Metadata kind = fields[cluster].metadata();
    String entity = kind.contains(ENTITY) ? kind.getString(ENTITY) : "";
    boolean spread = !entity.isEmpty() && kind.contains(SPREAD) && kind.getBoolean(SPREAD)
        && dims.size() % 2 == 0;
    ClusterSpace space = kind.contains(SPACE) ? space(path, kind.getString(SPACE)) : ClusterSpace.SCORES;
    return new StoredCentroids(List.copyOf(dims), centroids, entity, spread, space);
  }

  /** The clustered space from its word in the metadata; "" (written by no version, but harmless) is scores. */
  private static ClusterSpace space(String path, String word) {
    if (word.isEmpty()) {
      return ClusterSpace.SCORES;
    }
    for (ClusterSpace s : ClusterSpace.values()) {
      if (s.word().equals(word)) {
        return s;
      }
    }
    throw new InvalidJobException("centroids " + path + ": the clustered space is '" + word + "' (" + SPACE
        + "), which this version does not know (expected scores or features)");
  }
}
