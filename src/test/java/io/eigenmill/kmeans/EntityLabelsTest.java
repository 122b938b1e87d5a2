package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Apply with the centroids of a fit that clustered hosts (cluster.entity = host, with entity-spread): one label per
 * host from the host's aggregate over the apply input; row labels only with apply.label-rows.
 */
class EntityLabelsTest extends SparkSuite {
  private static final int HOSTS = 24;
  private static final int FIT_ROWS = 40;
  private static final int NEW_ROWS = 30;
  private static final int D = 4;

  private static Path dir;
  private static Path fit;
  /** Host -> its new rows (original units). */
  private static final Map<String, List<double[]>> NEW = new LinkedHashMap<>();

  @BeforeAll
  static void fitHostClusters() {
    dir = JobFiles.scratch("entity-labels");
    SplittableRandom r = new SplittableRandom(11);
    List<Row> train = new ArrayList<>();
    List<Row> next = new ArrayList<>();
    for (int h = 0; h < HOSTS; h++) {
      String host = String.format("host-%02d", h);
      // three behaviours: the group sets the level of the features; hosts of a group differ a little, and group 2
      // is also noisier, which the sd dimensions see
      int group = h % 3;
      double[] level = {group * 4.0, 10 - group * 3.0, 5 + (group == 1 ? 4 : 0), 2.0 + 0.1 * h};
      double noise = group == 2 ? 2.0 : 0.6;
      NEW.put(host, new ArrayList<>());
      for (int t = 0; t < FIT_ROWS + NEW_ROWS; t++) {
        double[] x = new double[D];
        double f = gauss(r);
        for (int j = 0; j < D; j++) {
          x[j] = level[j] + noise * (0.8 * f + 0.6 * gauss(r));
        }
        Row row = RowFactory.create(host, (long) t, x[0], x[1], x[2], x[3]);
        if (t < FIT_ROWS) {
          train.add(row);
        } else {
          next.add(row);
          NEW.get(host).add(x);
        }
      }
    }
    StructType schema = new StructType().add("host", DataTypes.StringType).add("t", DataTypes.LongType);
    for (int j = 0; j < D; j++) {
      schema = schema.add("m" + j, DataTypes.DoubleType);
    }
    spark.createDataFrame(train, schema).repartition(3).write().parquet(dir.resolve("train").toString());
    spark.createDataFrame(next, schema).repartition(4).write().parquet(dir.resolve("next").toString());
    fit = dir.resolve("fit");
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("train") + "\"\nfeatures.columns = "
        + "[\"m*\"]\nfeatures.keys = [host, t]\nreduce.components = 2\ncluster.enabled = true\ncluster.k = 3\n"
        + "cluster.entity = host\ncluster.entity-spread = true\noutput.path = \"" + fit + "\"\n"));
  }

  private static double gauss(SplittableRandom r) {
    return Math.sqrt(-2 * Math.log(1 - r.nextDouble())) * Math.cos(2 * Math.PI * r.nextDouble());
  }

  private RunResult apply(String name, String extra) {
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("next") + "\"\n"
        + "features.keys = [host, t]\napply.model = \"" + fit + "\"\napply.centroids = \"" + fit
        + "/clusters/centroids\"\n" + extra + "output.path = \"" + dir.resolve(name) + "\"\n"));
  }

  /** The fit's centroids, row c = cluster c, columns pc_1, pc_2, pc_1_sd, pc_2_sd. */
  private static double[][] centroids() {
    List<Row> rows = spark.read().parquet(fit.resolve("clusters").resolve("centroids").toString())
        .orderBy("cluster").collectAsList();
    String[] dims = {"pc_1", "pc_2", "pc_1_sd", "pc_2_sd"};
    double[][] c = new double[rows.size()][dims.length];
    for (int i = 0; i < rows.size(); i++) {
      for (int l = 0; l < dims.length; l++) {
        c[i][l] = rows.get(i).getDouble(rows.get(i).fieldIndex(dims[l]));
      }
    }
    return c;
  }

  /** Scores p = V^T (x - mean) / scale, plain loops over the saved model. */
  private static double[] scores(PcaModel m, double[] x) {
    double[] p = new double[m.k()];
    for (int c = 0; c < m.k(); c++) {
      for (int j = 0; j < m.d(); j++) {
        p[c] += m.loading(j, c) * (x[j] - m.means()[j]) / m.scales()[j];
      }
    }
    return p;
  }

  /** Brute force: index of the nearest centroid, its Euclidean distance, and the second-nearest distance. */
  private static double[] nearest(double[][] centroids, double[] point) {
    int best = -1;
    double d1 = Double.MAX_VALUE;
    double d2 = Double.MAX_VALUE;
    for (int c = 0; c < centroids.length; c++) {
      double s = 0;
      for (int l = 0; l < point.length; l++) {
        double e = point[l] - centroids[c][l];
        s += e * e;
      }
      double dist = Math.sqrt(s);
      if (dist < d1) {
        d2 = d1;
        d1 = dist;
        best = c;
      } else if (dist < d2) {
        d2 = dist;
      }
    }
    return new double[] {best, d1, d2};
  }

  @Test
  void oneLabelPerHostFromItsAggregate() throws Exception {
    RunResult run = apply("apply", "");
    PcaModel model = ModelStore.read(spark, "apply.model", fit.toString());
    double[][] centroids = centroids();
    List<Row> labels = spark.read().parquet(dir.resolve("apply").resolve("labels").toString()).collectAsList();
    assertEquals(List.of("host", "rows", "cluster", "distance"),
        List.of(spark.read().parquet(dir.resolve("apply").resolve("labels").toString()).columns()));
    assertEquals(HOSTS, labels.size(), "exactly one label per host");
    Map<String, Row> byHost = new HashMap<>();
    labels.forEach(r -> byHost.put(r.getString(0), r));
    assertEquals(HOSTS, byHost.size(), "no host twice");
    for (Map.Entry<String, List<double[]>> e : NEW.entrySet()) {
      // the host's aggregate as the fit defines it (ClusterJob: mean and sample sd of each score over the host's
      // rows), computed here with Commons Math Mean and StandardDeviation (n - 1) over scores from plain loops
      int n = e.getValue().size();
      double[][] p = new double[model.k()][n];
      for (int i = 0; i < n; i++) {
        double[] s = scores(model, e.getValue().get(i));
        for (int c = 0; c < model.k(); c++) {
          p[c][i] = s[c];
        }
      }
      double[] point = new double[2 * model.k()];
      for (int c = 0; c < model.k(); c++) {
        point[c] = new Mean().evaluate(p[c]);
        point[model.k() + c] = new StandardDeviation().evaluate(p[c]);
      }
      double[] want = nearest(centroids, point);
      // the fixture's hosts are far from a tie: the runner-up is more than 1e-3 farther
      assertTrue(want[2] - want[1] > 1e-3, e.getKey() + " is near a tie");
      Row got = byHost.get(e.getKey());
      assertNotNull(got, e.getKey());
      assertEquals(n, got.getLong(1), e.getKey() + " rows");
      assertEquals((int) want[0], got.getInt(2), e.getKey() + " cluster");
      // scores ~10 from sums of 4 products; means and sds over 30 rows summed in another order: differences of order
      // 30 * 1.1e-16 * 10, so 1e-9 on the distance is generous
      assertEquals(want[1], got.getDouble(3), 1e-9, e.getKey() + " distance");
    }
    assertFalse(Files.exists(dir.resolve("apply").resolve("row-labels")), "row labels only when asked");
    LabelResult l = run.labels();
    assertEquals("host", l.entity());
    assertEquals(HOSTS, l.labelled());
    assertEquals(0, l.unlabelled());
    JsonNode summary = new ObjectMapper().readTree(dir.resolve("apply").resolve("summary.json").toFile());
    assertEquals("host", summary.get("labels").get("by").asText());
    assertEquals(HOSTS, summary.get("labels").get("labelled").asInt());
    long total = 0;
    for (JsonNode size : summary.get("labels").get("sizes")) {
      total += size.asLong();
    }
    assertEquals(HOSTS, total, "sizes count hosts");
  }

  @Test
  void rowLabelsWhenAsked() {
    RunResult run = apply("apply-rows", "apply.label-rows = true\n");
    PcaModel model = ModelStore.read(spark, "apply.model", fit.toString());
    double[][] centroids = centroids();
    assertEquals(HOSTS, spark.read().parquet(dir.resolve("apply-rows").resolve("labels").toString()).count());
    List<Row> rows = spark.read().parquet(dir.resolve("apply-rows").resolve("row-labels").toString())
        .orderBy("host", "t").collectAsList();
    assertEquals(HOSTS * NEW_ROWS, rows.size());
    int i = 0;
    for (Map.Entry<String, List<double[]>> e : NEW.entrySet()) {
      for (double[] x : e.getValue()) {
        Row r = rows.get(i++);
        assertEquals(e.getKey(), r.getString(r.fieldIndex("host")));
        // a row is an entity of one row: its scores and sd 0 (the fit's rule for a one-row entity); brute force
        double[] s = scores(model, x);
        double[] point = new double[2 * model.k()];
        System.arraycopy(s, 0, point, 0, model.k());
        double[] want = nearest(centroids, point);
        if (want[2] - want[1] > 1e-6) {
          assertEquals((int) want[0], r.getInt(r.fieldIndex("cluster")), e.getKey() + " row");
        }
        assertEquals(want[1], r.getDouble(r.fieldIndex("distance")), 1e-9, e.getKey() + " row distance");
      }
    }
    long labelled = 0;
    for (long n : run.labels().rowSizes().values()) {
      labelled += n;
    }
    assertEquals(HOSTS * NEW_ROWS, labelled);
  }
}
