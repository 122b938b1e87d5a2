package io.eigenmill.pca;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.pca.math.RitzAccuracy;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import io.eigenmill.testing.MathFixtures;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.ArrayRealVector;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.linear.RealVector;
import org.apache.commons.math3.linear.SingularValueDecomposition;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The randomized method's own accuracy figures (summary.json {@code randomized_accuracy}) on a table with a known
 * spectrum, against figures computed exactly in the test with Apache Commons Math 3.6.1 (sample covariance
 * {@link Covariance}, {@link EigenDecomposition}, {@link SingularValueDecomposition}) and the published statements
 * the figures claim (RitzAccuracy: Kahan's theorem and Cauchy interlacing, Parlett 1998 Thm 11.5.1 and §10.1; Ky
 * Fan's maximum principle; Davis and Kahan's sin theta theorem, Parlett Thm 11.7.1).
 *
 * <p>The table: X = U diag(s) V^T, n = 3000 rows, d = 40 features, U with orthonormal centred columns and V
 * orthogonal (seeded Householder QR of Gaussian matrices), so the covariance has eigenvalues s_j^2 / (n - 1) with
 * eigenvectors the columns of V. s_j^2 = 1 / (j + 1): a slow decay (a sketch of l = 16 columns for k = 6 gains a
 * factor lambda_17 / lambda_6 = 7 / 17 per pass only), with a near-degenerate pair: s_4^2 = s_3^2 / 1.002.
 *
 * <p>Tolerances: the covariance the passes work on and Commons Math's differ by rounding only: sums over n = 3000
 * rows, each entry within gamma_n ||C|| ~ n eps ||C|| = 7e-13 ||C|| (Higham 2002, §3.1), and the eigensolvers are
 * backward stable. 1e-10 theta_1 covers that with room for the products of the residual itself.
 */
class RandomizedAccuracyTest extends SparkSuite {
  private static final int N = 3000;
  private static final int D = 40;
  private static final int K = 6;
  private static final double ROUNDING = 1e-10;

  private static Path table;
  private static RealMatrix covariance;
  private static double[] exactValues;
  private static RealMatrix exactVectors;

  @BeforeAll
  static void writeTable() throws Exception {
    double[] s2 = new double[D];
    for (int j = 0; j < D; j++) {
      s2[j] = 1.0 / (j + 1);
    }
    s2[3] = s2[2] / 1.002;
    double[] u = MathFixtures.orthonormalBasis(MathFixtures.centred(MathFixtures.gaussian(N, D, 811), N, D), N, D);
    double[] v = MathFixtures.orthonormal(D, D, 812);
    double[][] x = new double[N][D];
    for (int i = 0; i < N; i++) {
      for (int j = 0; j < D; j++) {
        double sum = 0;
        for (int c = 0; c < D; c++) {
          sum += u[i + c * N] * Math.sqrt(s2[c]) * 100 * v[j + c * D];
        }
        x[i][j] = sum;
      }
    }
    List<StructField> fields = new ArrayList<>();
    for (int j = 0; j < D; j++) {
      fields.add(DataTypes.createStructField(String.format("f%02d", j), DataTypes.DoubleType, false));
    }
    List<Row> rows = new ArrayList<>();
    for (double[] r : x) {
      rows.add(RowFactory.create(Arrays.stream(r).boxed().toArray()));
    }
    table = Files.createTempDirectory("eigenmill-spectrum-").resolve("known");
    spark.createDataFrame(rows, DataTypes.createStructType(fields)).repartition(3).write().parquet(table.toString());
    // the outside reference: Commons Math's sample covariance (n - 1) of the rows as written, and its eigenpairs
    covariance = new Covariance(new Array2DRowRealMatrix(x, false), true).getCovarianceMatrix();
    EigenDecomposition eigen = new EigenDecomposition(covariance);
    Integer[] order = new Integer[D];
    for (int i = 0; i < D; i++) {
      order[i] = i;
    }
    double[] raw = eigen.getRealEigenvalues();
    Arrays.sort(order, (a, b) -> Double.compare(raw[b], raw[a]));
    exactValues = new double[D];
    exactVectors = new Array2DRowRealMatrix(D, D);
    for (int i = 0; i < D; i++) {
      exactValues[i] = raw[order[i]];
      exactVectors.setColumnVector(i, eigen.getEigenvector(order[i]));
    }
    for (int j = 0; j < D; j++) {
      // the designed spectrum, through the exact covariance (U orthonormal and centred: C = V S^2 V^T / (n - 1))
      assertEquals(1e4 * s2[j] / (N - 1), exactValues[j], 1e-10 * exactValues[0], "designed eigenvalue " + j);
    }
  }

  private RunResult fit(String extra, Path out) throws Exception {
    String conf = "input.path = \"" + table + "\"\nreduce.method = randomized\nreduce.components = " + K + "\n"
        + "reduce.randomized.power-iterations = 1\n" + extra + "output.path = \"" + out + "\"\n";
    JobSettings settings = new SettingsReader().readString(conf, List.of(), "known-spectrum.conf");
    return JobRunner.run(spark, settings);
  }

  /** The exact residual C v - theta v of kept component i, from Commons Math's covariance. */
  private static RealVector exactResidual(Spectrum s, int i) {
    RealVector v = new ArrayRealVector(D);
    for (int j = 0; j < D; j++) {
      v.setEntry(j, s.loading(j, i));
    }
    return covariance.operate(v).subtract(v.mapMultiply(s.eigenvalues()[i]));
  }

  /**
   * Every figure against its exact counterpart and every stated bound against the exact spectrum; returns the
   * checked figures.
   */
  private static RitzAccuracy checkFigures(RunResult run) {
    RandomizedAccuracy acc = run.fit().randomizedAccuracy();
    RitzAccuracy f = acc.figures();
    Spectrum s = run.fit().spectrum();
    double theta1 = s.eigenvalues()[0];
    assertEquals(K, f.k());
    RealMatrix residualBlock = new Array2DRowRealMatrix(D, K);
    double exactCaptured = 0;
    double optimum = 0;
    for (int i = 0; i < K; i++) {
      RealVector r = exactResidual(s, i);
      residualBlock.setColumnVector(i, r);
      // reported residual = ||C v - theta v|| / theta_1 with C exact (Commons Math covariance), up to rounding
      assertEquals(r.getNorm() / theta1, f.residuals()[i], ROUNDING, "residual of component " + (i + 1));
      // Cauchy interlacing (Parlett §10.1): theta_i <= lambda_i
      assertTrue(s.eigenvalues()[i] <= exactValues[i] + ROUNDING * theta1, "theta_" + (i + 1) + " <= lambda");
      // the reported bound with the exact eigenvalues (Kahan, Parlett Thm 11.5.1): lambda_i - theta_i <= ||R_k||
      assertTrue(exactValues[i] - s.eigenvalues()[i] <= f.bound() * theta1,
          "lambda_" + (i + 1) + " - theta = " + (exactValues[i] - s.eigenvalues()[i]) + " within the bound "
              + f.bound() * theta1);
      RealVector v = new ArrayRealVector(D);
      for (int j = 0; j < D; j++) {
        v.setEntry(j, s.loading(j, i));
      }
      exactCaptured += v.dotProduct(covariance.operate(v));
      optimum += exactValues[i];
    }
    // the bound is ||R_k||_2 of the exact residual block (Commons Math SVD), up to rounding
    double exactNorm = new SingularValueDecomposition(residualBlock).getNorm();
    assertEquals(exactNorm / theta1, f.bound(), ROUNDING, "bound = ||R_k||_2 / theta_1");
    double trace = covariance.getTrace();
    // captured variance: trace(V_k^T C V_k) / trace(C) with C exact
    assertEquals(exactCaptured / trace, f.capturedVariance(), ROUNDING, "captured variance share");
    // Ky Fan: captured <= optimum; the reported interval: optimum <= captured + k ||R_k|| / trace
    assertTrue(f.capturedVariance() <= optimum / trace + ROUNDING, "captured at most the optimum");
    assertTrue(optimum / trace - f.capturedVariance() <= f.capturedVarianceBound(),
        "optimum " + optimum / trace + " within " + f.capturedVarianceBound() + " of captured "
            + f.capturedVariance());
    // Davis-Kahan (Parlett Thm 11.7.1) with the gap estimated from the Ritz values: the exact angle to the
    // eigenvector of lambda_i is within the estimate here (an estimate in general: the gap is not known exactly)
    for (int i = 0; i < K; i++) {
      RealVector v = new ArrayRealVector(D);
      for (int j = 0; j < D; j++) {
        v.setEntry(j, s.loading(j, i));
      }
      double cos = Math.min(1.0, Math.abs(v.dotProduct(exactVectors.getColumnVector(i))));
      double angle = Math.acos(cos);
      assertTrue(angle <= f.angleBounds()[i] * 1.01 + 1e-7, "angle of component " + (i + 1) + ": " + angle
          + " within the estimate " + f.angleBounds()[i]);
    }
    return f;
  }

  @Test
  void aTightToleranceAddsPowerIterationsUntilTheBoundIsMet() throws Exception {
    Path out = Files.createTempDirectory("eigenmill-acc-").resolve("fit");
    RunResult run = fit("reduce.randomized.tolerance = 1e-4\nreduce.randomized.max-power-iterations = 30\n", out);
    RandomizedAccuracy acc = run.fit().randomizedAccuracy();
    RitzAccuracy f = checkFigures(run);
    assertTrue(acc.targetMet(), "target met");
    assertTrue(f.bound() <= 1e-4, "bound " + f.bound());
    assertTrue(acc.powerIterationsRun() > 1, "iterations added: " + acc.powerIterationsRun());
    assertEquals(acc.powerIterationsRun() - 1, acc.extraPasses());
    assertEquals(acc.powerIterationsRun() + 2, run.fit().passes(), "moments pass + one per iteration + one");
    double[] byPass = acc.boundByPass();
    assertEquals(acc.powerIterationsRun() + 1, byPass.length);
    assertEquals(f.bound(), byPass[byPass.length - 1]);
    // the iterations stop at the first pass within the tolerance
    assertTrue(byPass[byPass.length - 2] > 1e-4, Arrays.toString(byPass));
    // converged, the near-degenerate pair (components 3 and 4, gap 0.2%) has far larger angle estimates than the
    // well-separated leading components (an unconverged fit has every estimate near pi / 2)
    double leading = Math.max(f.angleBounds()[0], f.angleBounds()[1]);
    assertTrue(f.angleBounds()[2] > 100 * leading && f.angleBounds()[3] > 100 * leading,
        Arrays.toString(f.angleBounds()));
    JsonNode summary = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
    JsonNode block = summary.get("randomized_accuracy");
    assertTrue(block.get("target_met").asBoolean());
    assertEquals(1e-4, block.get("tolerance").asDouble());
    assertEquals(acc.powerIterationsRun(), block.get("power_iterations_run").asInt());
    assertEquals(acc.extraPasses(), block.get("extra_passes").asInt());
    assertEquals(K, block.get("residuals").size());
    assertEquals(f.bound(), block.get("bound").asDouble());
    assertEquals(f.capturedVariance(), block.get("captured_variance").asDouble());
    String html = Files.readString(out.resolve("report.html"));
    assertTrue(html.contains("randomized-accuracy"), "the report shows the residuals");
    System.out.printf("known spectrum, tolerance 1e-4: %d power iterations (%d added), bound by pass %s, angle"
        + " estimates %s%n", acc.powerIterationsRun(), acc.extraPasses(), Arrays.toString(byPass),
        Arrays.toString(f.angleBounds()));
  }

  @Test
  void theCapReachedLeavesTheTargetUnmetAndSaysSo() throws Exception {
    Path out = Files.createTempDirectory("eigenmill-acc-").resolve("fit");
    RunResult run = fit("reduce.randomized.tolerance = 1e-4\nreduce.randomized.max-power-iterations = 1\n", out);
    RandomizedAccuracy acc = run.fit().randomizedAccuracy();
    RitzAccuracy f = checkFigures(run);
    assertFalse(acc.targetMet(), "bound " + f.bound() + " above 1e-4 after one iteration");
    assertEquals(1, acc.powerIterationsRun());
    assertEquals(0, acc.extraPasses());
    assertEquals(3, run.fit().passes());
    assertTrue(run.fit().warnings().stream().anyMatch(w -> w.contains("reduce.randomized.tolerance")),
        run.fit().warnings().toString());
    JsonNode summary = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
    assertFalse(summary.get("randomized_accuracy").get("target_met").asBoolean());
    System.out.printf("known spectrum, capped at 1 iteration: bound %.3e, residuals %s%n", f.bound(),
        Arrays.toString(f.residuals()));
  }
}
