package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Parquet written by another writer (DuckDB 1.5 through its npm package; src/test/resources/second-writer, made by
 * make_tables.py and make_parquet.mjs there): dictionary pages whose dictionary shrinks from one row group to the next
 * (90 distinct values, then 8, 9, ...), nulls in every column, a column null in a whole row group, and float, int,
 * bigint and decimal(12,3) columns. Spark's vectorized reader leaves stale dictionary codes at null slots, so a reader
 * that asks a null cell for its value fails on these files; every reader of ours (the fit's, the scoring pass's and
 * k-means') goes through them here.
 *
 * <p>Reference: reference.json beside the files, numpy 2.4.6's {@code linalg.eigh} of {@code numpy.cov(ddof = 1)} of
 * the complete rows, computed from the same values before DuckDB wrote them. Tolerances: the covariance pass and
 * numpy sum in different orders, so the covariance matrices differ by a few hundred ulps of their entries
 * (|dC_ij| <= 1e-13 sqrt(C_ii C_jj) here); by Weyl's inequality an eigenvalue moves by at most the norm of that
 * perturbation, hence 1e-10 relative plus 1e-12 of the largest eigenvalue (the mixed table spans 14 orders of
 * magnitude). A loading moves by the perturbation over the gap to the nearest other eigenvalue, and both
 * eigensolvers (LAPACK's, here and in numpy) are backward stable only to a small multiple of eps times the largest
 * eigenvalue (Golub and Van Loan, Matrix Computations, 4th ed., 8.1.2 and 8.4): hence 1e-9 plus 64 eps lambda_1 / gap
 * (1e-7 for the mixed table, whose largest eigenvalue is 1.3e10 and a gap 22). A score of component c moves by at
 * most ||x - mean|| ||dv_c|| (Cauchy-Schwarz), and ||x - mean|| is the norm of the row's reference scores on all
 * components (V orthogonal).
 */
class SecondWriterCorpusTest extends SparkSuite {

  private static JsonNode reference(String table) throws Exception {
    try (InputStream in = SecondWriterCorpusTest.class.getResourceAsStream("/second-writer/reference.json")) {
      return new ObjectMapper().readTree(in).get(table);
    }
  }

  /** A folder holding the corpus file {@code table}.parquet, as a job's input. */
  private static Path input(String table) throws Exception {
    Path dir = JobFiles.scratch("second-writer").resolve(table);
    Files.createDirectories(dir);
    try (InputStream in = SecondWriterCorpusTest.class.getResourceAsStream("/second-writer/" + table + ".parquet")) {
      Files.copy(in, dir.resolve(table + ".parquet"));
    }
    return dir;
  }

  private static RunResult fit(String table, String extra) throws Exception {
    JsonNode ref = reference(table);
    Path out = JobFiles.scratch("second-writer-out").resolve("o");
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + input(table) + "\"\n"
        + "features.columns = " + JobFiles.quoted(Datasets.strings(ref.get("features"))) + "\n"
        + "features.keys = [seq]\nreduce.method = covariance\nreduce.components = " + ref.get("features").size()
        + "\noutput.scores = true\noutput.path = \"" + out + "\"\n" + extra));
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"doubles", "mixed"})
  void fitAndScoresMatchNumpy(String table) throws Exception {
    JsonNode ref = reference(table);
    RunResult run = fit(table, "");
    double[] lambda = Datasets.doubles(ref.get("eigenvalues"));
    double[] loadings = Datasets.doubles(ref.get("loadings_column_major"));
    double[] means = Datasets.doubles(ref.get("means"));
    int d = lambda.length;
    assertEquals(ref.get("rows").asLong(), run.model().rows(), "complete rows (numpy: rows without NaN)");
    double[] got = run.fit().spectrum().eigenvalues();
    double[] loadingTol = new double[d];
    for (int i = 0; i < d; i++) {
      assertEquals(lambda[i], got[i], 1e-10 * lambda[i] + 1e-12 * lambda[0], table + " eigenvalue " + (i + 1));
      assertEquals(means[i], run.model().means()[i], 1e-12 * Math.max(1, Math.abs(means[i])), table + " mean " + i);
      double gap = Double.MAX_VALUE;
      for (int j = 0; j < d; j++) {
        gap = j == i ? gap : Math.min(gap, Math.abs(lambda[i] - lambda[j]));
      }
      loadingTol[i] = 1e-9 + 64 * Math.ulp(1.0) * lambda[0] / gap;
      for (int j = 0; j < d; j++) {
        assertEquals(loadings[j + i * d], run.model().loading(j, i), loadingTol[i], table + " loading " + j + "," + i);
      }
    }
    Dataset<Row> scores = spark.read().parquet(Path.of(run.outputPath()).resolve("scores").toString());
    assertEquals(ref.get("rows").asLong(), scores.count(), "one score row per complete row");
    double[][] first = Datasets.matrix(ref.get("first_scores"));
    JsonNode seqs = ref.get("first_seq");
    for (int r = 0; r < first.length; r++) {
      Row row = scores.filter(functions.col("seq").equalTo(seqs.get(r).asLong())).first();
      double norm = 0;
      for (double v : first[r]) {
        norm += v * v;
      }
      for (int c = 0; c < d; c++) {
        double tol = Math.sqrt(norm) * Math.sqrt(d) * loadingTol[c] + 1e-12 * Math.sqrt(norm);
        assertEquals(first[r][c], row.getDouble(row.fieldIndex("pc_" + (c + 1))), tol,
            table + " score of seq " + seqs.get(r) + " on pc_" + (c + 1));
      }
    }
  }

  @Test
  void imputedAndClusteredRunsReadEveryRow() throws Exception {
    // impute-mean keeps every row, so the reader passes each null cell of every row group (rows: DuckDB wrote 8192)
    RunResult run = fit("doubles", "prepare.missing = impute-mean\ncluster.enabled = true\ncluster.k = 3\n"
        + "cluster.space = features\n");
    assertEquals(8192, run.model().rows(), "rows in doubles.parquet (make_tables.py: 4 row groups of 2048)");
    long assigned = spark.read().parquet(Path.of(run.outputPath()).resolve("clusters/assignments").toString()).count();
    assertEquals(8192, assigned, "k-means assigns every imputed row");
    assertTrue(run.clusters() != null && run.clusters().k() == 3, "clustered with k = 3");
    List<String> warnings = run.warnings();
    assertTrue(warnings.stream().anyMatch(w -> w.contains("disk_util")), "imputation names the column: " + warnings);
  }
}
