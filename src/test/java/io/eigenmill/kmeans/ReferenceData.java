package io.eigenmill.kmeans;

import com.fasterxml.jackson.databind.JsonNode;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.Choices.KSelection;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.Datasets;
import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.OptionalInt;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/**
 * The reference datasets of src/test/resources/datasets as the tests of clustering need them: the feature columns
 * standardised as the README's "kmeans.standardized" (z = (x - mean) / sd with R's column means and n-1 sds, taken
 * from the JSON), with a row number key, and brute-force helpers (adjusted Rand index, settings).
 */
final class ReferenceData {
  final String name;
  final JsonNode reference;
  final List<String> features;
  final double[][] z;
  final String[] labels;

  private ReferenceData(String name, JsonNode reference, List<String> features, double[][] z, String[] labels) {
    this.name = name;
    this.reference = reference;
    this.features = features;
    this.z = z;
    this.labels = labels;
  }

  static ReferenceData load(String name) {
    JsonNode ref = Datasets.reference(name);
    List<String> features = Datasets.strings(ref.get("feature_columns"));
    double[] means = Datasets.doubles(ref.get("column_means").get("values"));
    double[] sds = Datasets.doubles(ref.get("column_sds").get("values"));
    List<String[]> rows = csv(name);
    List<String> header = Arrays.asList(rows.get(0));
    int n = rows.size() - 1;
    double[][] z = new double[n][features.size()];
    String[] labels = new String[n];
    int classColumn = header.indexOf("class");
    for (int i = 0; i < n; i++) {
      String[] row = rows.get(i + 1);
      for (int j = 0; j < features.size(); j++) {
        z[i][j] = (Double.parseDouble(row[header.indexOf(features.get(j))]) - means[j]) / sds[j];
      }
      labels[i] = classColumn < 0 ? null : row[classColumn];
    }
    return new ReferenceData(name, ref, features, z, labels);
  }

  private static List<String[]> csv(String name) {
    try (InputStream in = ReferenceData.class.getResourceAsStream("/datasets/" + name + ".csv");
        BufferedReader r = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8))) {
      List<String[]> out = new ArrayList<>();
      for (String line = r.readLine(); line != null; line = r.readLine()) {
        if (!line.isBlank()) {
          out.add(line.split(",", -1));
        }
      }
      return out;
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** The z-scores with a key column {@code row} (0-based CSV row), {@code partitions} partitions. */
  Dataset<Row> frame(SparkSession spark, int partitions) {
    StructType schema = new StructType().add("row", DataTypes.IntegerType, false);
    for (String f : features) {
      schema = schema.add(f, DataTypes.DoubleType, false);
    }
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < z.length; i++) {
      Object[] v = new Object[features.size() + 1];
      v[0] = i;
      for (int j = 0; j < features.size(); j++) {
        v[j + 1] = z[i][j];
      }
      rows.add(RowFactory.create(v));
    }
    return spark.createDataFrame(rows, schema).repartition(partitions);
  }

  /**
   * The first q correlation-PCA scores: z times the first q rows of the JSON's pca.correlation loadings (unit
   * length, R prcomp up to sign).
   */
  double[][] scores(int q) {
    double[][] v = Datasets.matrix(reference.get("pca").get("correlation").get("loadings"));
    double[][] out = new double[z.length][q];
    for (int i = 0; i < z.length; i++) {
      for (int c = 0; c < q; c++) {
        double s = 0;
        for (int j = 0; j < z[i].length; j++) {
          s += z[i][j] * v[c][j];
        }
        out[i][c] = s;
      }
    }
    return out;
  }

  /** Point column names p_1..p_d. */
  static List<String> columns(int d) {
    List<String> out = new ArrayList<>();
    for (int j = 1; j <= d; j++) {
      out.add("p_" + j);
    }
    return out;
  }

  /** Any points with a key column {@code row} (0-based), {@code partitions} partitions. */
  static Dataset<Row> frame(SparkSession spark, double[][] points, List<String> columns, int partitions) {
    StructType schema = new StructType().add("row", DataTypes.IntegerType, false);
    for (String f : columns) {
      schema = schema.add(f, DataTypes.DoubleType, false);
    }
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < points.length; i++) {
      Object[] v = new Object[columns.size() + 1];
      v[0] = i;
      for (int j = 0; j < columns.size(); j++) {
        v[j + 1] = points[i][j];
      }
      rows.add(RowFactory.create(v));
    }
    return spark.createDataFrame(rows, schema).repartition(partitions);
  }

  JsonNode kmeans(int k) {
    return reference.get("kmeans").get("standardized").get("k=" + k);
  }

  static JobSettings.Cluster settings(OptionalInt k, int kMin, int kMax, int restarts, int sample) {
    return new JobSettings.Cluster(true, ClusterSpace.FEATURES, k, kMin, kMax, KSelection.SILHOUETTE, restarts, 100,
        1.0e-6, sample, 100_000, 7, "", false, 10, 1000);
  }

  /**
   * Adjusted Rand index (Hubert and Arabie 1985, "Comparing partitions", J. Classification 2), from the contingency
   * table: (sum_ij C(n_ij,2) - [sum_i C(a_i,2) sum_j C(b_j,2)] / C(n,2)) / (0.5 [sum_i C(a_i,2) + sum_j C(b_j,2)]
   * - [sum_i C(a_i,2) sum_j C(b_j,2)] / C(n,2)).
   */
  static double adjustedRand(String[] a, String[] b) {
    java.util.Map<String, Long> cells = new java.util.HashMap<>();
    java.util.Map<String, Long> rowsA = new java.util.HashMap<>();
    java.util.Map<String, Long> colsB = new java.util.HashMap<>();
    for (int i = 0; i < a.length; i++) {
      cells.merge(a[i] + "\u0000" + b[i], 1L, Long::sum);
      rowsA.merge(a[i], 1L, Long::sum);
      colsB.merge(b[i], 1L, Long::sum);
    }
    double index = 0;
    for (long c : cells.values()) {
      index += c * (c - 1) / 2.0;
    }
    double sa = 0;
    for (long c : rowsA.values()) {
      sa += c * (c - 1) / 2.0;
    }
    double sb = 0;
    for (long c : colsB.values()) {
      sb += c * (c - 1) / 2.0;
    }
    double pairs = a.length * (a.length - 1) / 2.0;
    double expected = sa * sb / pairs;
    return (index - expected) / (0.5 * (sa + sb) - expected);
  }
}
