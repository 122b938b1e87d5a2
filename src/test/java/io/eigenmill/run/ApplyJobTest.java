package io.eigenmill.run;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.Test;

/** Scoring, monitoring statistics and the apply job. */
class ApplyJobTest extends SparkSuite {
  private static final List<String> ARRESTS = List.of("Murder", "Assault", "UrbanPop", "Rape");

  private RunResult fitArrests(Path out, int k) {
    String csv = Datasets.csv("usarrests").toString();
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + csv + "\"\ninput.format = csv\n"
        + "features.columns = " + JobFiles.quoted(ARRESTS) + "\nfeatures.keys = [state]\n"
        + "prepare.scaling = standardize\nreduce.components = " + k + "\noutput.scores = true\n"
        + "output.path = \"" + out + "\"\n"));
  }

  private static Row byState(Dataset<Row> scores, String state) {
    return scores.filter(functions.col("state").equalTo(state)).first();
  }

  @Test
  void scoresT2AndQMatchTheReference() {
    // usarrests.reference.json: R 4.2.2 prcomp(scale. = TRUE) scores of rows 1-3, components 1-2, and SPE of rows
    // 1-3 at k = n_components_90 = 3. Scores are O(1) and computed from loadings accurate to ~1e-14 (the correlation
    // matrix is well conditioned, largest/smallest eigenvalue 14.3): 1e-9 absolute is generous.
    JsonNode ref = Datasets.reference("usarrests").get("pca").get("correlation");
    double[][] scores = Datasets.matrix(ref.get("scores_first3_rows_first2_components"));
    double[] eigen = Datasets.doubles(ref.get("eigenvalues"));
    Path out2 = JobFiles.scratch("k2").resolve("fit");
    fitArrests(out2, 2);
    Dataset<Row> s2 = spark.read().parquet(out2.resolve("scores").toString());
    String[] states = {"Alabama", "Alaska", "Arizona"};
    for (int i = 0; i < 3; i++) {
      Row r = byState(s2, states[i]);
      assertEquals(scores[i][0], r.getDouble(r.fieldIndex("pc_1")), 1e-9, states[i] + " pc_1");
      assertEquals(scores[i][1], r.getDouble(r.fieldIndex("pc_2")), 1e-9, states[i] + " pc_2");
      // Hotelling T2 by its definition, sum of score^2 / eigenvalue, from the reference scores and eigenvalues
      double t2 = scores[i][0] * scores[i][0] / eigen[0] + scores[i][1] * scores[i][1] / eigen[1];
      assertEquals(t2, r.getDouble(r.fieldIndex("t2")), 1e-9, states[i] + " t2");
    }
    Path out3 = JobFiles.scratch("k3").resolve("fit");
    fitArrests(out3, 3);
    Dataset<Row> s3 = spark.read().parquet(out3.resolve("scores").toString());
    double[] spe = Datasets.doubles(ref.get("spe_first3_rows").get("values"));
    assertEquals(3, ref.get("spe_first3_rows").get("k").asInt());
    for (int i = 0; i < 3; i++) {
      Row r = byState(s3, states[i]);
      assertEquals(spe[i], r.getDouble(r.fieldIndex("q")), 1e-9, states[i] + " Q (SPE)");
    }
  }

  /** Two latent factors in six features plus small noise; planted rows are added by the tests. */
  private Dataset<Row> factorTable(int n, long seed, List<Row> extra) {
    SplittableRandom r = new SplittableRandom(seed);
    double[][] w = {{1.0, 0.8, -0.5, 0.3, 0.0, 0.6}, {0.2, -0.4, 0.9, 0.7, 1.1, -0.3}};
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < n; i++) {
      double f1 = gauss(r) * 3;
      double f2 = gauss(r) * 2;
      Object[] v = new Object[7];
      v[0] = "row-" + i;
      for (int j = 0; j < 6; j++) {
        v[j + 1] = 10 + f1 * w[0][j] + f2 * w[1][j] + 0.05 * gauss(r);
      }
      rows.add(RowFactory.create(v));
    }
    rows.addAll(extra);
    StructType schema = new StructType().add("id", DataTypes.StringType);
    for (int j = 0; j < 6; j++) {
      schema = schema.add("m" + j, DataTypes.DoubleType);
    }
    return spark.createDataFrame(rows, schema);
  }

  private static double gauss(SplittableRandom r) {
    return Math.sqrt(-2 * Math.log(1 - r.nextDouble())) * Math.cos(2 * Math.PI * r.nextDouble());
  }

  @Test
  void plantedOutliersAreFlaggedByTheRightStatistic() throws Exception {
    Path dir = JobFiles.scratch("planted");
    factorTable(3000, 1, List.of()).write().parquet(dir.resolve("train").toString());
    String common = "features.columns = [\"m*\"]\nfeatures.keys = [id]\nreduce.components = 2\n";
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("train") + "\"\n" + common
        + "output.path = \"" + dir.resolve("model-run") + "\"\n"));
    PcaModel model = ModelStore.read(spark, "apply.model", dir.resolve("model-run").toString());
    int d = model.d();
    // a direction orthogonal to both kept loadings (Gram-Schmidt of e_0), i.e. inside the discarded subspace
    double[] out = new double[d];
    out[0] = 1;
    for (int c = 0; c < 2; c++) {
      double dot = 0;
      for (int j = 0; j < d; j++) {
        dot += out[j] * model.loading(j, c);
      }
      for (int j = 0; j < d; j++) {
        out[j] -= dot * model.loading(j, c);
      }
    }
    double norm = 0;
    for (double v : out) {
      norm += v * v;
    }
    norm = Math.sqrt(norm);
    Object[] qRow = new Object[d + 1];
    Object[] tRow = new Object[d + 1];
    qRow[0] = "planted-q";
    tRow[0] = "planted-t2";
    double kept = 8 * Math.sqrt(model.eigenvalues()[0]);
    for (int j = 0; j < d; j++) {
      // at the model mean (T2 = 0, Q = 0) plus 1.0 along the discarded direction: Q = 1 >> noise variance 0.0025
      qRow[j + 1] = model.means()[j] + out[j] / norm;
      // at the mean plus 8 standard deviations along the first kept component: T2 = 64 with Q = 0
      tRow[j + 1] = model.means()[j] + kept * model.loading(j, 0);
    }
    factorTable(300, 2, List.of(RowFactory.create(qRow), RowFactory.create(tRow))).write()
        .parquet(dir.resolve("new").toString());
    RunResult applied = JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("new") + "\"\n"
        + "features.keys = [id]\napply.model = \"" + dir.resolve("model-run") + "\"\noutput.path = \""
        + dir.resolve("apply-run") + "\"\n"));
    Dataset<Row> scores = spark.read().parquet(dir.resolve("apply-run/scores").toString());
    Row q = scores.filter("id = 'planted-q'").first();
    Row t = scores.filter("id = 'planted-t2'").first();
    assertTrue(q.getBoolean(q.fieldIndex("flag_q")), "row shifted along a discarded direction: Q flags it");
    assertFalse(q.getBoolean(q.fieldIndex("flag_t2")), "... and T2 does not");
    assertTrue(t.getBoolean(t.fieldIndex("flag_t2")), "row far along a kept direction: T2 flags it");
    assertFalse(t.getBoolean(t.fieldIndex("flag_q")), "... and Q does not");
    assertEquals(64.0, t.getDouble(t.fieldIndex("t2")), 1e-6, "T2 = 8^2 by construction");
    assertEquals(1.0, q.getDouble(q.fieldIndex("q")), 1e-9, "Q = 1 by construction");
    MonitorResult m = applied.monitor();
    assertEquals(302, m.rowsScored());
    List<String> topKeys = m.top().stream().map(f -> f.keys().get(0)).toList();
    assertTrue(topKeys.subList(0, 2).containsAll(List.of("planted-q", "planted-t2")),
        "the planted rows are the two most severe: " + topKeys);
    assertEquals("m0", m.top().stream().filter(f -> f.keys().get(0).equals("planted-q")).findFirst().orElseThrow()
        .qContributions().get(0).feature(), "the shift started from m0, whose residual is the largest");
  }

  @Test
  void scoresArePartitionedLikeTheInput() throws Exception {
    Path dir = JobFiles.scratch("partitioned");
    Path fit = dir.resolve("fit");
    fitArrests(fit, 2);
    spark.read().option("header", "true").option("inferSchema", "true").csv(Datasets.csv("usarrests").toString())
        .withColumn("date", functions.when(functions.col("UrbanPop").gt(65), "2026-11-02").otherwise("2026-11-03"))
        .write().partitionBy("date").parquet(dir.resolve("daily").toString());
    RunResult r = JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("daily") + "\"\n"
        + "features.keys = [state]\napply.model = \"" + fit + "\"\noutput.path = \"" + dir.resolve("out") + "\"\n"));
    assertEquals(List.of("date"), r.plan().partitionColumns());
    assertTrue(Files.isDirectory(dir.resolve("out/scores/date=2026-11-02")));
    assertTrue(Files.isDirectory(dir.resolve("out/scores/date=2026-11-03")));
    assertEquals(50, spark.read().parquet(dir.resolve("out/scores").toString()).count());
  }

  @Test
  void missingOrRetypedFeatureIsRejectedAndNothingIsWritten() throws Exception {
    Path dir = JobFiles.scratch("schema");
    Path fit = dir.resolve("fit");
    fitArrests(fit, 2);
    Dataset<Row> table = spark.read().option("header", "true").option("inferSchema", "true")
        .csv(Datasets.csv("usarrests").toString());
    table.drop("Rape").write().parquet(dir.resolve("missing").toString());
    table.withColumn("Assault", functions.col("Assault").cast("string")).write()
        .parquet(dir.resolve("retyped").toString());
    for (String variant : List.of("missing", "retyped")) {
      Path out = dir.resolve("out-" + variant);
      InvalidJobException e = assertThrows(InvalidJobException.class, () -> JobRunner.run(spark,
          JobFiles.settings("input.path = \"" + dir.resolve(variant) + "\"\napply.model = \"" + fit + "\"\n"
              + "output.path = \"" + out + "\"\n")));
      String expected = variant.equals("missing")
          ? "lacks the model feature Rape"
          : "feature type changed in the input: Assault (string, the model was fitted on int)";
      assertTrue(e.getMessage().contains(expected), e.getMessage());
      assertFalse(Files.exists(out), "nothing written for " + variant);
    }
  }
}
