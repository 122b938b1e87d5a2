package io.eigenmill.kmeans;

import io.eigenmill.io.PcaModel;
import io.eigenmill.math.Linalg;
import io.eigenmill.settings.Choices.Method;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/**
 * Made-up fleet: 12 hosts in three groups of four, 10 rows of two PCA scores per host, and a PCA model of three
 * features (cpu, mem, net) whose first two loadings map the scores back to original units. The host means and sample
 * standard deviations are computed here directly, as the reference for entity-level clustering.
 */
final class EntityData {
  static final int HOSTS = 12;
  static final int ROWS = 10;
  static final double[][] GROUPS = {{-3, 0}, {3, 0}, {0, 4}};

  final double[][][] rows = new double[HOSTS][ROWS][2];
  final int[] group = new int[HOSTS];
  final PcaModel model;

  EntityData() {
    SplittableRandom rnd = new SplittableRandom(13);
    for (int h = 0; h < HOSTS; h++) {
      group[h] = h % 3;
      double ox = rnd.nextGaussian() * 0.3;
      double oy = rnd.nextGaussian() * 0.3;
      double spread = 0.2 + 0.1 * (h % 4);
      for (int i = 0; i < ROWS; i++) {
        rows[h][i][0] = GROUPS[group[h]][0] + ox + spread * rnd.nextGaussian();
        rows[h][i][1] = GROUPS[group[h]][1] + oy + spread * rnd.nextGaussian();
      }
    }
    double[] v = new double[9];
    for (int i = 0; i < 9; i++) {
      v[i] = rnd.nextGaussian();
    }
    Linalg.orthonormalizeColumns(v, 3, 3);
    double[] loadings = java.util.Arrays.copyOf(v, 6);
    List<String> features = List.of("cpu", "mem", "net");
    List<String> types = List.of("double", "double", "double");
    model = new PcaModel(PcaModel.FORMAT_VERSION, "test", features, types, "standardize", Method.COVARIANCE, 120,
        new double[] {50, 8, 300}, new double[] {10, 2, 100}, 2, loadings, new double[] {3, 1, 0.5}, true, 4.5,
        PcaModel.fingerprint(features, types), new double[] {10, 2, 100});
  }

  static String host(int h) {
    return String.format("h%02d", h);
  }

  /** Per host: mean of pc_1, pc_2, then their sample standard deviations (n - 1). */
  double[][] hostPoints() {
    double[][] out = new double[HOSTS][4];
    for (int h = 0; h < HOSTS; h++) {
      for (int l = 0; l < 2; l++) {
        double m = 0;
        for (double[] r : rows[h]) {
          m += r[l] / ROWS;
        }
        double s = 0;
        for (double[] r : rows[h]) {
          s += (r[l] - m) * (r[l] - m) / (ROWS - 1);
        }
        out[h][l] = m;
        out[h][l + 2] = Math.sqrt(s);
      }
    }
    return out;
  }

  /** mean + scale * (V y) for the first two coordinates y of a host point. */
  double[] original(double[] y) {
    double[] x = new double[3];
    for (int j = 0; j < 3; j++) {
      x[j] = model.means()[j] + model.scales()[j] * (model.loading(j, 0) * y[0] + model.loading(j, 1) * y[1]);
    }
    return x;
  }

  Dataset<Row> frame(SparkSession spark) {
    StructType schema = new StructType().add("host", DataTypes.StringType, false).add("t", DataTypes.IntegerType)
        .add("pc_1", DataTypes.DoubleType).add("pc_2", DataTypes.DoubleType);
    List<Row> out = new ArrayList<>();
    for (int h = 0; h < HOSTS; h++) {
      for (int i = 0; i < ROWS; i++) {
        out.add(RowFactory.create(host(h), i, rows[h][i][0], rows[h][i][1]));
      }
    }
    return spark.createDataFrame(out, schema).repartition(3);
  }
}
