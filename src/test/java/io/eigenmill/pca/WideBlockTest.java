package io.eigenmill.pca;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import io.eigenmill.testing.WideTables;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.commons.math3.stat.descriptive.moment.Variance;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * A table of 1,100 features: its blocks are capped at 8 MiB, floor(8,388,608 / (8 x 1,101)) = 952 rows (the
 * features and the column of ones), not reduce.block-rows = 1024. The fit with the default block rows equals, bit for
 * bit, the fit with reduce.block-rows = 952 (same blocks, same sums), and the plan states the block.
 */
class WideBlockTest extends SparkSuite {
  private static final int D = 1100;
  private static final int ROWS = 2400;
  private static Path table;
  private static double[][] columns;

  @BeforeAll
  static void write() throws Exception {
    StructType schema = WideTables.hostAndFeatures(D);
    SplittableRandom r = new SplittableRandom(20261204);
    columns = new double[D][ROWS];
    List<Row> data = new ArrayList<>();
    for (int i = 0; i < ROWS; i++) {
      Object[] row = new Object[D + 1];
      row[0] = "h" + i;
      double a = r.nextGaussian() * 3;
      double b = r.nextGaussian();
      for (int j = 0; j < D; j++) {
        double v = 10 + (j % 7) * a + (j % 3 - 1) * b + r.nextGaussian();
        row[j + 1] = v;
        columns[j][i] = v;
      }
      data.add(RowFactory.create(row));
    }
    table = Files.createTempDirectory("eigenmill-wide-block").resolve("t");
    spark.createDataFrame(data, schema).coalesce(1).write().parquet(table.toString());
  }

  private static RunResult fit(String extra) throws Exception {
    Path out = Files.createTempDirectory("eigenmill-wide-block-out").resolve("o");
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + table + "\"\nfeatures.keys = [host]\n"
        + "reduce.method = covariance\nreduce.components = 3\nprepare.scaling = none\noutput.path = \"" + out
        + "\"\n" + extra));
  }

  private static String blockLine(RunResult run) {
    return run.plan().describe().lines().filter(l -> l.startsWith("block:")).findFirst().orElse("(no block line)");
  }

  @Test
  void blocksAreCappedByBytesAndTheFitIsTheSame() throws Exception {
    RunResult capped = fit("");
    RunResult explicit = fit("reduce.block-rows = 952\n");
    // a wide table's plan lists its first 40 and last 5 features and counts the rest (1100 - 45 = 1055)
    String featuresLine = capped.plan().describe().lines().filter(l -> l.startsWith("features (1100):"))
        .findFirst().orElseThrow();
    assertTrue(featuresLine.contains("m39:double, ... 1055 more ..., m1095:double") && !featuresLine.contains("m40:")
        && featuresLine.endsWith("m1099:double (1100 double; all listed in the run's model)"), featuresLine);
    assertTrue(blockLine(capped).matches("block: +952 rows x 1101 columns, 8\\.00 MiB .*capped at 8 MiB.*"),
        blockLine(capped));
    assertTrue(blockLine(explicit).matches("block: +952 rows x 1101 columns, 8\\.00 MiB .*: reduce.block-rows .*"),
        blockLine(explicit));
    // same blocks, same sums: exactly equal
    assertArrayEquals(explicit.fit().spectrum().eigenvalues(), capped.fit().spectrum().eigenvalues(), 0.0);
    assertArrayEquals(explicit.model().means(), capped.model().means(), 0.0);
    assertArrayEquals(explicit.model().loadings(), capped.model().loadings(), 0.0);
    // outside check (Commons Math Variance, unbiased): the eigenvalues sum to the trace of the covariance, the sum of
    // the column variances. Tolerance: the eigensolver's backward error is a few d x eps x ||C|| (Golub and Van
    // Loan, 8.2); 1e-9 relative of the trace is far above that (d x eps = 2.4e-13) and far below any lost block.
    double trace = 0;
    for (double[] c : columns) {
      trace += new Variance(true).evaluate(c);
    }
    double sum = 0;
    for (double e : capped.fit().spectrum().eigenvalues()) {
      sum += e;
    }
    assertEquals(trace, sum, 1e-9 * trace);
    assertEquals(ROWS, capped.model().rows());
  }
}
