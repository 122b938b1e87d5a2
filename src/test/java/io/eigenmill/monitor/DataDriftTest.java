package io.eigenmill.monitor;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.stream.Stream;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.apache.commons.math3.stat.descriptive.moment.Variance;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The new data against the model in apply jobs (summary data_drift, data-drift/), and apply.compare-with refusing
 * the applied model itself.
 */
class DataDriftTest extends SparkSuite {
  private static final int D = 6;
  private static final int N_FIT = 4000;
  private static final int N_NEW = 2000;
  /** Two latent factors in six features plus small noise (the fixture of ApplyJobTest). */
  private static final double[][] W = {{1.0, 0.8, -0.5, 0.3, 0.0, 0.6}, {0.2, -0.4, 0.9, 0.7, 1.1, -0.3}};

  private static Path dir;
  private static Path fit;
  private static double[][] fitted;

  @BeforeAll
  static void fitOnce() {
    dir = JobFiles.scratch("data-drift");
    fitted = factorRows(N_FIT, 1, 0.0);
    write(fitted, dir.resolve("train"));
    fit = dir.resolve("fit");
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("train") + "\"\n"
        + "features.columns = [\"m*\"]\nfeatures.keys = [id]\nprepare.scaling = standardize\n"
        + "reduce.components = 2\noutput.path = \"" + fit + "\"\n"));
  }

  /** Rows of the factor model; {@code extra} adds independent noise of that sd to m2 (off the model's subspace). */
  private static double[][] factorRows(int n, long seed, double extra) {
    SplittableRandom r = new SplittableRandom(seed);
    double[][] x = new double[n][D];
    for (int i = 0; i < n; i++) {
      double f1 = gauss(r) * 3;
      double f2 = gauss(r) * 2;
      for (int j = 0; j < D; j++) {
        x[i][j] = 10 + f1 * W[0][j] + f2 * W[1][j] + 0.05 * gauss(r);
      }
      x[i][2] += extra * gauss(r);
    }
    return x;
  }

  private static double gauss(SplittableRandom r) {
    return Math.sqrt(-2 * Math.log(1 - r.nextDouble())) * Math.cos(2 * Math.PI * r.nextDouble());
  }

  private static void write(double[][] x, Path path) {
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < x.length; i++) {
      Object[] v = new Object[D + 1];
      v[0] = "row-" + i;
      for (int j = 0; j < D; j++) {
        v[j + 1] = x[i][j];
      }
      rows.add(RowFactory.create(v));
    }
    StructType schema = new StructType().add("id", DataTypes.StringType);
    for (int j = 0; j < D; j++) {
      schema = schema.add("m" + j, DataTypes.DoubleType);
    }
    // three partitions: the moments of the pass merge across partitions
    spark.createDataFrame(rows, schema).repartition(3).write().parquet(path.toString());
  }

  private static double[] column(double[][] x, int j) {
    double[] c = new double[x.length];
    for (int i = 0; i < x.length; i++) {
      c[i] = x[i][j];
    }
    return c;
  }

  private RunResult apply(String name, double[][] rows, String extra) {
    write(rows, dir.resolve(name + "-in"));
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve(name + "-in") + "\"\n"
        + "features.keys = [id]\napply.model = \"" + fit + "\"\n" + extra + "output.path = \""
        + dir.resolve(name) + "\"\n"));
  }

  private static DataDriftResult.FeatureDrift feature(DataDriftResult r, String name) {
    return r.features().stream().filter(f -> f.feature().equals(name)).findFirst().orElseThrow();
  }

  @Test
  void aShiftedCopyReportsEachShiftInModelSds() throws IOException {
    // the fitted rows with m0 moved by +2 and m3 by -1.5 of their sample sds (Commons Math StandardDeviation,
    // n - 1, the model's sds' definition)
    double sd0 = new StandardDeviation().evaluate(column(fitted, 0));
    double sd3 = new StandardDeviation().evaluate(column(fitted, 3));
    double[][] shifted = new double[N_FIT][];
    for (int i = 0; i < N_FIT; i++) {
      shifted[i] = fitted[i].clone();
      shifted[i][0] += 2.0 * sd0;
      shifted[i][3] -= 1.5 * sd3;
    }
    RunResult run = apply("shifted", shifted, "");
    DataDriftResult r = run.dataDrift();
    assertNotNull(r);
    assertEquals(N_FIT, r.rows());
    // same rows, so the shifts are exact up to rounding: means and sds of values ~10 with sd ~3 summed in different
    // orders over 4000 rows differ by about n eps |x| / sd = 4000 * 1.1e-16 * 10 / 3 = 1.5e-12; 1e-9 is generous
    double[] expected = {2.0, 0, 0, -1.5, 0, 0};
    for (int j = 0; j < D; j++) {
      DataDriftResult.FeatureDrift f = feature(r, "m" + j);
      assertEquals(expected[j], f.meanShiftSd(), 1e-9, "m" + j + " shift (sd units, set by the test)");
      // a shift does not change a variance: ratio 1 (same rows, same sample variance, rounding as above)
      assertEquals(1.0, f.varianceRatio(), 1e-9, "m" + j + " variance ratio");
    }
    // same variances, so the split in and outside the subspace is the model's own (its eigenvalues are those rows'
    // variances): relative rounding as above
    assertEquals(r.modelOutsideShare(), r.newOutsideShare(), 1e-9 + 1e-6 * r.modelOutsideShare());
    assertEquals(r.modelInsideShare(), r.newInsideShare(), 1e-9);
    for (DataDriftResult.ComponentDrift c : r.components()) {
      assertEquals(1.0, c.varianceRatio(), 1e-9, "component " + c.component() + " variance / eigenvalue");
    }
    // the table and the summary carry the same numbers
    List<Row> table = spark.read().parquet(dir.resolve("shifted").resolve("data-drift").toString())
        .filter("measure = 'mean_shift_sd' and feature = 'm0'").collectAsList();
    assertEquals(1, table.size());
    assertEquals(2.0, table.get(0).getDouble(table.get(0).fieldIndex("value")), 1e-9);
    JsonNode summary = new ObjectMapper().readTree(dir.resolve("shifted").resolve("summary.json").toFile());
    assertEquals(-1.5, summary.get("data_drift").get("features").get(3).get("mean_shift_sd").asDouble(), 1e-9);
    String html = Files.readString(dir.resolve("shifted").resolve("report.html"));
    assertTrue(html.contains("New data against the model"), "the report's section");
  }

  @Test
  void freshRowsOfTheSameDistributionShowOnlySamplingNoise() {
    RunResult run = apply("fresh", factorRows(N_NEW, 2, 0.0), "");
    DataDriftResult r = run.dataDrift();
    // published sampling theory (normal data, independent samples): (mean_new - mean_fit) / sd has standard error
    // sqrt(1/n_new + 1/n_fit); a sample variance over the true one has variance 2 / (n - 1), so the ratio of two has
    // standard error about sqrt(2/(n_new - 1) + 2/(n_fit - 1)). z = 4.5 leaves a two-sided 7e-6 chance per feature
    // (the seed is fixed, so the test is deterministic either way)
    double z = 4.5;
    double meanBound = z * Math.sqrt(1.0 / N_NEW + 1.0 / N_FIT);
    double ratioBound = z * Math.sqrt(2.0 / (N_NEW - 1) + 2.0 / (N_FIT - 1));
    for (DataDriftResult.FeatureDrift f : r.features()) {
      assertTrue(Math.abs(f.meanShiftSd()) < meanBound, f.feature() + " shift " + f.meanShiftSd() + " >= "
          + meanBound);
      assertTrue(Math.abs(f.varianceRatio() - 1) < ratioBound, f.feature() + " variance ratio " + f.varianceRatio());
    }
    for (DataDriftResult.ComponentDrift c : r.components()) {
      assertTrue(Math.abs(c.varianceRatio() - 1) < ratioBound, "component " + c.component() + " " + c.varianceRatio());
      assertTrue(Math.abs(c.scoreMeanSd()) < meanBound, "component " + c.component() + " mean " + c.scoreMeanSd());
    }
  }

  @Test
  void varianceOutsideTheSubspaceMatchesADirectComputation() {
    // m2 gets independent noise of sd 1 (a third of its spread), which the two kept components cannot hold
    double[][] rows = factorRows(N_NEW, 3, 1.0);
    DataDriftResult r = apply("loose", rows, "").dataDrift();
    PcaModel model = ModelStore.read(spark, "apply.model", fit.toString());
    int k = model.k();
    // direct computation, plain loops: z = (x - mean) / scale, p = V^T z, r = z - V p; variances by Commons Math
    // Variance (n - 1)
    double[][] z = new double[D][N_NEW];
    double[][] p = new double[k][N_NEW];
    double[][] res = new double[D][N_NEW];
    for (int i = 0; i < N_NEW; i++) {
      for (int j = 0; j < D; j++) {
        z[j][i] = (rows[i][j] - model.means()[j]) / model.scales()[j];
      }
      for (int c = 0; c < k; c++) {
        double s = 0;
        for (int j = 0; j < D; j++) {
          s += model.loading(j, c) * z[j][i];
        }
        p[c][i] = s;
      }
      for (int j = 0; j < D; j++) {
        double back = 0;
        for (int c = 0; c < k; c++) {
          back += model.loading(j, c) * p[c][i];
        }
        res[j][i] = z[j][i] - back;
      }
    }
    double total = 0;
    double outside = 0;
    for (int j = 0; j < D; j++) {
      total += new Variance().evaluate(z[j]);
      outside += new Variance().evaluate(res[j]);
    }
    // both sides sum the same values in other orders; the residual is about 1/3 of z here, so cancellation costs at
    // most a factor 10 over the n eps = 2000 * 1.1e-16 of the sums: relative 1e-9 is generous
    assertEquals(total, r.newTotalVariance(), 1e-9 * total, "total variance in prepared units");
    assertEquals(outside / total, r.newOutsideShare(), 1e-9, "share outside the subspace");
    double inside = 0;
    for (int c = 0; c < k; c++) {
      double v = new Variance().evaluate(p[c]);
      inside += v;
      DataDriftResult.ComponentDrift cd = r.components().get(c);
      assertEquals(v, cd.newVariance(), 1e-9 * v, "score variance of component " + (c + 1));
      assertEquals(v / model.eigenvalues()[c], cd.varianceRatio(), 1e-9, "against the eigenvalue");
      assertEquals(new Mean().evaluate(p[c]) / Math.sqrt(model.eigenvalues()[c]), cd.scoreMeanSd(), 1e-9);
    }
    assertEquals(inside / total, r.newInsideShare(), 1e-9);
    // the model's own discarded share, from its eigenvalues
    double kept = 0;
    for (int c = 0; c < k; c++) {
      kept += model.eigenvalues()[c];
    }
    assertEquals(1 - kept / model.totalVariance(), r.modelOutsideShare(), 1e-12);
    // the extra noise adds about 1/9 of m2's variance outside the subspace (standardized: about 0.1 of the total
    // of 6): far above the fitted share of the 0.05-sd noise (about 3e-4)
    assertTrue(r.newOutsideShare() > 10 * r.modelOutsideShare(), r.newOutsideShare() + " vs "
        + r.modelOutsideShare());
  }

  @Test
  void compareWithRefusesTheAppliedModel() throws IOException {
    write(factorRows(200, 4, 0.0), dir.resolve("day"));
    String common = "input.path = \"" + dir.resolve("day") + "\"\nfeatures.keys = [id]\napply.model = \"" + fit
        + "\"\n";
    // the same folder, spelled as its model/ subfolder
    String self = fit.resolve("model").toString();
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> JobRunner.run(spark, JobFiles.settings(
        common + "apply.compare-with = \"" + self + "\"\noutput.path = \"" + dir.resolve("self") + "\"\n")));
    assertTrue(e.getMessage().startsWith("apply.compare-with = " + self + ": is the model this job applies"),
        e.getMessage());
    assertTrue(e.getMessage().contains("the same folder") && e.getMessage().contains("must name another model"),
        e.getMessage());
    assertFalse(Files.exists(dir.resolve("self")), "nothing written");
    // an identical copy elsewhere: same model fingerprint
    Path copy = dir.resolve("copy");
    copyTree(fit.resolve("model"), copy.resolve("model"));
    InvalidJobException twin = assertThrows(InvalidJobException.class, () -> JobRunner.run(spark,
        JobFiles.settings(common + "apply.compare-with = \"" + copy + "\"\noutput.path = \"" + dir.resolve("twin")
            + "\"\n")));
    assertTrue(twin.getMessage().contains("an identical model, fingerprint "), twin.getMessage());
    // the command line: exit 2 with the message, for run and for plan
    Path job = dir.resolve("self.conf");
    Files.writeString(job, common + "apply.compare-with = \"" + fit + "\"\noutput.path = \"" + dir.resolve("cli")
        + "\"\n");
    for (String command : List.of("run", "plan")) {
      CommandRun o = CommandRun.of(command, job.toString());
      assertEquals(2, o.code(), command + ": " + o.err());
      assertTrue(o.err().contains("apply.compare-with = " + fit + ": is the model this job applies"), o.err());
    }
    // another model is still compared (principal angles), and the data drift is there as well
    Path other = dir.resolve("other-fit");
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("day") + "\"\nfeatures.columns = "
        + "[\"m*\"]\nfeatures.keys = [id]\nprepare.scaling = standardize\nreduce.components = 2\noutput.path = \""
        + other + "\"\n"));
    RunResult ok = JobRunner.run(spark, JobFiles.settings(common + "apply.compare-with = \"" + other
        + "\"\noutput.path = \"" + dir.resolve("compared") + "\"\n"));
    assertNotNull(ok.drift());
    assertNotNull(ok.dataDrift());
    assertTrue(Files.exists(dir.resolve("compared").resolve("drift")));
    assertTrue(Files.exists(dir.resolve("compared").resolve("data-drift")));
  }

  @Test
  void theFitsOwnScoresCarryNoDataDrift() {
    // output.scores in a fit scores the fitted rows: nothing to compare, no block
    RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + dir.resolve("train") + "\"\n"
        + "features.columns = [\"m*\"]\nfeatures.keys = [id]\nreduce.components = 2\noutput.scores = true\n"
        + "output.path = \"" + dir.resolve("fit-scores") + "\"\n"));
    assertNull(run.dataDrift());
    assertFalse(Files.exists(dir.resolve("fit-scores").resolve("data-drift")));
  }

  private static void copyTree(Path from, Path to) throws IOException {
    try (Stream<Path> files = Files.walk(from)) {
      for (Path f : files.toList()) {
        Path target = to.resolve(from.relativize(f).toString());
        if (Files.isDirectory(f)) {
          Files.createDirectories(target);
        } else {
          Files.copy(f, target);
        }
      }
    }
  }
}
