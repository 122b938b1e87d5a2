package io.eigenmill.kmeans;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/** Seeded Gaussian blobs with a string key {@code id}, made in the test (no outside data). */
final class Blobs {
  final double[][] x;
  final int[] group;

  Blobs(long seed, double[][] centres, int[] sizes, double sd) {
    int n = 0;
    for (int s : sizes) {
      n += s;
    }
    x = new double[n][];
    group = new int[n];
    SplittableRandom rnd = new SplittableRandom(seed);
    int i = 0;
    for (int g = 0; g < sizes.length; g++) {
      for (int m = 0; m < sizes[g]; m++) {
        x[i] = new double[centres[g].length];
        for (int l = 0; l < x[i].length; l++) {
          x[i][l] = centres[g][l] + sd * rnd.nextGaussian();
        }
        group[i++] = g;
      }
    }
  }

  static List<String> columns(int d) {
    List<String> c = new ArrayList<>();
    for (int l = 1; l <= d; l++) {
      c.add("pc_" + l);
    }
    return c;
  }

  Dataset<Row> frame(SparkSession spark, int partitions) {
    int d = x[0].length;
    StructType schema = new StructType().add("id", DataTypes.StringType, false);
    for (String c : columns(d)) {
      schema = schema.add(c, DataTypes.DoubleType, true);
    }
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < x.length; i++) {
      Object[] v = new Object[d + 1];
      v[0] = String.format("r%04d", i);
      for (int l = 0; l < d; l++) {
        v[l + 1] = x[i][l];
      }
      rows.add(RowFactory.create(v));
    }
    return spark.createDataFrame(rows, schema).repartition(partitions);
  }
}
