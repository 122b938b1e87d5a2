package io.eigenmill.monitor;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Timestamp;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.QRDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The Q rule and the false-alarm warning through a fit with scores. The table: 20,000 Gaussian rows of 33 features
 * with covariance A diag(30, 15, 6, 0.5 x 30) A^T (A a seeded random rotation), keys host and ts (a minute apart);
 * with k = 2 the discarded spectrum has h0 near -0.63 (Jackson and Mudholkar 1979: h0 = 1 - 2 theta1 theta3 /
 * (3 theta2^2)), the case of many small discarded eigenvalues after one larger one.
 */
class QLimitJobTest extends SparkSuite {
  private static final int ROWS = 20_000;
  private static final int D = 33;
  private static final long START = java.time.Instant.parse("2026-11-20T00:00:00Z").getEpochSecond();

  private static Path dir;
  private static String input;

  @BeforeAll
  static void writeTable() {
    dir = JobFiles.scratch("q-limit");
    double[] lambda = new double[D];
    lambda[0] = 30;
    lambda[1] = 15;
    lambda[2] = 6;
    for (int j = 3; j < D; j++) {
      lambda[j] = 0.5;
    }
    Random r = new Random(77);
    double[][] g = new double[D][D];
    for (double[] row : g) {
      for (int j = 0; j < D; j++) {
        row[j] = r.nextGaussian();
      }
    }
    RealMatrix a = new QRDecomposition(new Array2DRowRealMatrix(g)).getQ();
    StructType schema = new StructType().add("host", DataTypes.StringType).add("ts", DataTypes.TimestampType);
    for (int j = 0; j < D; j++) {
      schema = schema.add("f" + j, DataTypes.DoubleType);
    }
    List<Row> rows = new ArrayList<>();
    double[] z = new double[D];
    for (int i = 0; i < ROWS; i++) {
      for (int j = 0; j < D; j++) {
        z[j] = r.nextGaussian() * Math.sqrt(lambda[j]);
      }
      double[] x = a.operate(z);
      Object[] v = new Object[D + 2];
      v[0] = "h" + (i % 40);
      v[1] = new Timestamp((START + 60L * i) * 1000);
      for (int j = 0; j < D; j++) {
        v[j + 2] = x[j];
      }
      rows.add(RowFactory.create(v));
    }
    input = dir.resolve("table").toString();
    spark.createDataFrame(rows, schema).repartition(3).write().parquet(input);
  }

  private static Path fit(String name, String extra) {
    Path out = dir.resolve(name);
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + input + "\"\nfeatures.keys = [host, ts]\n"
        + "reduce.components = 2\noutput.scores = true\noutput.path = \"" + out + "\"\n" + extra));
    return out;
  }

  private static boolean warnsOfFlags(JsonNode summary, String statistic) {
    for (JsonNode w : summary.get("warnings")) {
      if (w.asText().startsWith("flagged share far above the expected") && w.asText().contains("above the "
          + statistic + " limit")) {
        return true;
      }
    }
    return false;
  }

  @Test
  void autoTakesBoxWhereH0IsNotPositiveAndRaisesNoFalseAlarm() throws Exception {
    Path out = fit("auto", "");
    JsonNode summary = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
    JsonNode m = summary.get("monitoring");
    // h0 from the summary's own eigenvalues by the published formula (Jackson and Mudholkar 1979), summed here
    double t1 = 0;
    double t2 = 0;
    double t3 = 0;
    JsonNode ev = summary.get("eigenvalues");
    for (int j = 2; j < ev.size(); j++) {
      double v = ev.get(j).asDouble();
      t1 += v;
      t2 += v * v;
      t3 += v * v * v;
    }
    assertEquals(D, ev.size(), "the covariance method computes every eigenvalue");
    double h0 = 1 - 2 * t1 * t3 / (3 * t2 * t2);
    assertTrue(h0 < 0, "the table is built for h0 <= 0: " + h0);
    assertEquals("box", m.get("q_rule").asText());
    // the same sums in another order: rounding of a few ulps of h0's terms
    assertEquals(h0, m.get("q_h0").asDouble(), 1e-12);
    assertTrue(m.get("q_limit_rule").asText().startsWith("Box (1954)"), m.get("q_limit_rule").asText());
    // Box's share on such a spectrum is about 2% (ControlLimitsTest measures it on fresh rows): far from a false
    // alarm, and no warning
    long flaggedQ = m.get("flagged_q").asLong();
    assertTrue(flaggedQ > 0 && flaggedQ < 0.03 * ROWS, "flagged by Q: " + flaggedQ);
    assertFalse(warnsOfFlags(summary, "Q"), summary.get("warnings").toString());
    assertFalse(warnsOfFlags(summary, "T2"), summary.get("warnings").toString());
    String html = Files.readString(out.resolve("report.html"));
    assertTrue(html.contains("Q rule") && html.contains("box, h0 = "), "the report names the rule");
  }

  @Test
  void jacksonMudholkarOnTheSameTableFlagsNearlyEveryRowAndWarns() throws Exception {
    Path out = fit("jm", "monitor.q-limit = jackson-mudholkar\n");
    JsonNode summary = new ObjectMapper().readTree(out.resolve("summary.json").toFile());
    JsonNode m = summary.get("monitoring");
    assertEquals("jackson-mudholkar", m.get("q_rule").asText());
    assertTrue(m.get("flagged_q").asLong() > 0.9 * ROWS, "the user's report: " + m.get("flagged_q"));
    assertTrue(warnsOfFlags(summary, "Q"), summary.get("warnings").toString());
    String warning = summary.get("warnings").toString();
    assertTrue(warning.contains("fitted rows") && warning.contains("monitor.q-limit = auto"), warning);
    assertFalse(warnsOfFlags(summary, "T2"), "T2's beta limit holds on Gaussian rows: " + warning);
    String html = Files.readString(out.resolve("report.html"));
    assertTrue(html.contains("flagged share far above the expected"), "the report lists the warning");
  }

  @Test
  void anUnknownRuleIsOneClearProblem() {
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> JobFiles.settings("input.path = \"x\"\n"
        + "output.path = \"y\"\nmonitor.q-limit = chi-square\n"));
    assertEquals(1, e.problems().size(), e.problems().toString());
    String p = e.problems().get(0);
    assertTrue(p.contains("monitor.q-limit") && p.contains("chi-square") && p.contains("jackson-mudholkar")
        && p.contains("box") && p.contains("auto"), p);
  }
}
