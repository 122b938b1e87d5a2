package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertEquals;

import com.fasterxml.jackson.databind.JsonNode;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import io.eigenmill.testing.Datasets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/** Shared steps of the table-input tests: the wine dataset, a covariance fit of a job's input, the R reference. */
final class TableInputs {
  static final String DATASET = "wine";

  private TableInputs() {}

  static List<String> features() {
    return Datasets.strings(Datasets.reference(DATASET).get("feature_columns"));
  }

  /** The dataset as Spark reads its CSV (one file, so one partition, rows in file order). */
  static Dataset<Row> rows(SparkSession spark) {
    return spark.read().option("header", "true").option("inferSchema", "true")
        .csv(Datasets.csv(DATASET).toString());
  }

  /** The settings of a covariance fit of all components; {@code input} holds the input keys. */
  static JobSettings settings(String input) throws Exception {
    Path out = Files.createTempDirectory("eigenmill-table-out-").resolve("fit");
    String conf = input + "\nfeatures.columns = [" + String.join(", ", features().stream().map(f -> "\"" + f + "\"")
        .toList()) + "]\nprepare.scaling = none\nreduce.method = covariance\nreduce.components = "
        + features().size() + "\noutput.path = \"" + out + "\"\n";
    return new SettingsReader().readString(conf, List.of(), "table-input.conf");
  }

  static RunResult fit(SparkSession spark, String input) throws Exception {
    return JobRunner.run(spark, settings(input));
  }

  /**
   * The fit against R 4.2.2 {@code stats::prcomp} on the wine data (src/test/resources/datasets/README.md and
   * wine.reference.json, covariance PCA): eigenvalues and ratios to 1e-9 relative, loadings to 1e-7, the bounds and
   * their derivation of FitJobTest (backward-stable eigen solver, eps ||C|| / gap per eigenvector).
   */
  static void matchesR(Spectrum s) {
    JsonNode pca = Datasets.reference(DATASET).get("pca").get("covariance");
    double[] eigen = Datasets.doubles(pca.get("eigenvalues"));
    double[] ratios = Datasets.doubles(pca.get("explained_variance_ratio"));
    double[][] loadings = Datasets.matrix(pca.get("loadings"));
    int d = eigen.length;
    for (int c = 0; c < d; c++) {
      // R prcomp (wine.reference.json): eigenvalue and explained-variance ratio of component c + 1
      assertEquals(eigen[c], s.eigenvalues()[c], 1e-9 * eigen[0], "eigenvalue " + (c + 1));
      assertEquals(ratios[c], s.varianceShares()[c], 1e-9, "ratio " + (c + 1));
      for (int j = 0; j < d; j++) {
        // R prcomp rotation with the README's sign convention
        assertEquals(loadings[c][j], s.loading(j, c), 1e-7, "loading c" + (c + 1) + " " + j);
      }
    }
  }
}
