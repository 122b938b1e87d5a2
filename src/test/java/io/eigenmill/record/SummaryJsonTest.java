package io.eigenmill.record;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.run.JobRunner;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.FleetFixture;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import org.apache.spark.sql.Row;
import org.junit.jupiter.api.Test;

/** The output names of a run: summary.json, spectrum/ and clusters/k-selection speak of variance shares and wcss. */
class SummaryJsonTest extends SparkSuite {
  private static final List<String> ARRESTS = List.of("Murder", "Assault", "UrbanPop", "Rape");
  private static final List<String> OLD_NAMES = List.of("explained_variance_ratio", "cumulative_variance_ratio",
      "within_ss");

  @Test
  void fitAndClusteringWriteVarianceSharesAndWcss() throws Exception {
    Path out = JobFiles.scratch("summary-names").resolve("fit");
    RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + Datasets.csv("usarrests")
        + "\"\ninput.format = csv\nfeatures.columns = " + JobFiles.quoted(ARRESTS) + "\nfeatures.keys = [state]\n"
        + "prepare.scaling = standardize\nreduce.components = 2\n"
        + "cluster { enabled = true, space = features, k-range = \"2..3\", restarts = 3 }\n"
        + "output.path = \"" + out + "\"\n"));
    JsonNode summary = new ObjectMapper().readTree(out.resolve("summary.json").toFile());

    double[] shares = run.fit().spectrum().varianceShares();
    double[] cumulative = run.fit().spectrum().cumulativeVarianceShares();
    assertArrayEquals(shares, Datasets.doubles(summary.get("variance_share")), 0.0, "variance_share");
    assertArrayEquals(cumulative, Datasets.doubles(summary.get("cumulative_variance_share")), 0.0,
        "cumulative_variance_share");
    assertEquals(1.0, cumulative[cumulative.length - 1], 1e-12, "all four components: the shares sum to 1");
    String text = summary.toString();
    for (String old : OLD_NAMES) {
      assertFalse(text.contains("\"" + old + "\""), "summary.json has no " + old);
    }

    List<Row> spectrum = spark.read().parquet(out.resolve("spectrum").toString()).orderBy("component")
        .collectAsList();
    List<String> columns = Arrays.asList(spark.read().parquet(out.resolve("spectrum").toString()).columns());
    assertEquals(List.of("component", "eigenvalue", "variance_share", "cumulative_variance_share", "kept"), columns);
    assertEquals(shares.length, spectrum.size());
    for (int c = 0; c < shares.length; c++) {
      Row r = spectrum.get(c);
      assertEquals(shares[c], r.getDouble(r.fieldIndex("variance_share")), 0.0, "spectrum variance_share " + c);
      assertEquals(cumulative[c], r.getDouble(r.fieldIndex("cumulative_variance_share")), 0.0,
          "spectrum cumulative_variance_share " + c);
    }

    JsonNode clusters = summary.get("clusters");
    assertEquals(run.clusters().wcss(), clusters.get("wcss").asDouble(), 0.0, "clusters.wcss");
    assertEquals(2, clusters.get("k_selection").size());
    for (JsonNode k : clusters.get("k_selection")) {
      assertTrue(k.get("wcss").asDouble() > 0, "k_selection wcss, k = " + k.get("k"));
      assertFalse(k.has("within_ss"));
      // the restarts of each k: a small table restarts on the driver, at least cluster.restarts = 3 of them
      assertTrue(k.get("restarts_run").asInt() >= 3, "restarts_run, k = " + k.get("k"));
      assertTrue(k.get("restarts_at_best").asInt() >= 1
          && k.get("restarts_at_best").asInt() <= k.get("restarts_run").asInt());
      JsonNode spread = k.get("restarts_wcss");
      assertEquals(k.get("wcss").asDouble(), spread.get("min").asDouble(), 1e-9 * k.get("wcss").asDouble());
      assertTrue(spread.get("min").asDouble() <= spread.get("median").asDouble()
          && spread.get("median").asDouble() <= spread.get("max").asDouble());
      assertTrue(k.get("restarts_on_driver").asBoolean());
    }
    for (String field : List.of("restarts_run", "restarts_at_best", "restarts_wcss", "restarts_on_driver")) {
      assertTrue(clusters.has(field), "clusters." + field + " of the chosen k");
    }
    List<Row> selection = spark.read().parquet(out.resolve("clusters").resolve("k-selection").toString())
        .orderBy("k").collectAsList();
    List<String> selectionColumns = Arrays.asList(selection.get(0).schema().fieldNames());
    assertTrue(selectionColumns.contains("wcss"), "k-selection columns " + selectionColumns);
    assertFalse(selectionColumns.contains("within_ss"), "k-selection columns " + selectionColumns);
    for (int i = 0; i < selection.size(); i++) {
      Row r = selection.get(i);
      assertEquals(run.clusters().selection().get(i).wcss(), r.getDouble(r.fieldIndex("wcss")), 0.0,
          "k-selection wcss, k = " + r.getInt(r.fieldIndex("k")));
    }
  }

  @Test
  void driftBlockNamesVarianceSharesOfBothModels() {
    var drift = new FleetFixture().drift();
    Map<String, Object> m = SummaryJson.driftSection(drift);
    assertArrayEquals(drift.varianceShareOld(), (double[]) m.get("variance_share_old"), 0.0);
    assertArrayEquals(drift.varianceShareNew(), (double[]) m.get("variance_share_new"), 0.0);
    assertFalse(m.containsKey("explained_variance_ratio_old") || m.containsKey("explained_variance_ratio_new"));
  }
}
