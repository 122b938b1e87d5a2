package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.testing.SparkSuite;
import java.util.ArrayList;
import java.util.List;
import java.util.OptionalInt;
import org.apache.spark.sql.Row;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * k-means on the open reference datasets (src/test/resources/datasets/README.md), standardised as the README's
 * "kmeans.standardized" (z-scores with R's means and n-1 sds). Reference: the best within-cluster sum of squares found
 * by R 4.2.2 {@code stats::kmeans} Hartigan-Wong nstart=200 and the other methods listed there, its cluster sizes,
 * and the adjusted Rand index of the best k = 3 partition of wine against the cultivar labels (scikit-learn 1.2.1
 * {@code adjusted_rand_score}, equal to the exact rational).
 *
 * <p>How likely our restarts reach the best: the README gives the share of single Lloyd starts with k-means++ seeding
 * (scikit-learn) that reach it, and with this seed our single starts (k-means|| then Lloyd) reached it in a measured
 * share of 300: usarrests k = 3: 13/300 (README k-means++: 0.017), wine k = 2: 10/300 (0.05), every other required
 * case >= 52/300. With R restarts a miss has probability about (1 - share)^R: usarrests 250 restarts,
 * (1 - 0.017)^250 = 1.4e-2 by the README's share, (1 - 0.043)^250 = 1.7e-5 by ours; wine 300 restarts,
 * (1 - 0.033)^300 = 4e-5; longley 30 restarts, (1 - 0.37)^30 = 1e-6. The seed is fixed, so the outcome is
 * reproducible. Wine k = 4 is the exception: Lloyd-type methods almost never reach the best there (share 0.003 for
 * k-means++, 0.000 for R Lloyd, 0/300 for ours; best-of-200 R Lloyd and best-of-300 scikit-learn random starts stop
 * at 1168.775747); we require WSS >= best (1 - 1e-9), which no partition can beat, and WSS <= 1168.775747 (1 + 1e-9),
 * the best such methods reached (1.38e-4 above the best).
 *
 * <p>Tolerance 1e-6 relative on the within-cluster sum of squares (the bound): at a common optimum our within-cluster sum of squares is a sum of
 * n (<= 178) exactly recomputed squared distances, accurate to ~n eps = 4e-14 relative.
 */
class ReferenceKMeansTest extends SparkSuite {
  /** Restarts per k: see the class comment for the miss probabilities they give. */
  static int restarts(String dataset) {
    return switch (dataset) {
      case "usarrests" -> 250;
      case "wine" -> 300;
      default -> 30;
    };
  }
  static final double WINE_K4_LLOYD_BEST = 1168.775747;

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"usarrests", "wine", "longley"})
  void bestWithinSsAndSizesForK2To4(String dataset) {
    ReferenceData data = ReferenceData.load(dataset);
    ClusterOutcome o = new ClusterJob(spark, ReferenceData.settings(OptionalInt.empty(), 2, 4, restarts(dataset), 500),
        data.frame(spark, 3), List.of("row"), data.features, null, ClusterSpace.FEATURES).execute();
    ClusterResult r = o.result();
    List<Row> table = o.kSelection().orderBy("k").collectAsList();
    assertEquals(3, table.size(), "one k-selection row per k");
    for (int k = 2; k <= 4; k++) {
      JsonNode ref = data.kmeans(k);
      double best = ref.get("best_tot_withinss").asDouble();
      double wss = r.selection().get(k - 2).wcss();
      assertEquals(k, r.selection().get(k - 2).k());
      assertEquals(wss, table.get(k - 2).getDouble(table.get(k - 2).fieldIndex("wcss")), 0.0, "table = record");
      // nothing can beat the best partition (README: best found by R Hartigan-Wong nstart=200 and others)
      assertTrue(wss >= best * (1 - 1e-9), dataset + " k=" + k + ": " + wss + " below the best " + best);
      if (dataset.equals("wine") && k == 4) {
        assertTrue(wss <= WINE_K4_LLOYD_BEST * (1 + 1e-9), "wine k=4: " + wss + " worse than Lloyd's best");
        continue;
      }
      // R stats::kmeans best_tot_withinss, README table
      assertEquals(best, wss, 1e-6 * best, dataset + " k=" + k + " wcss");
      // R stats::kmeans cluster_sizes at the best (descending)
      long[] sizes = longs(table.get(k - 2).getList(table.get(k - 2).fieldIndex("sizes")));
      assertArrayEquals(longs(ref.get("cluster_sizes")), sizes, dataset + " k=" + k + " sizes");
    }
  }

  @Test
  void wineThreeClustersAgainstCultivars() {
    ReferenceData data = ReferenceData.load("wine");
    // single starts reach the best at k = 3 in a share 0.313 (README, k-means++) and 112/300 (ours, this seed):
    // 60 restarts miss with probability (1 - 0.313)^60 = 2e-10
    ClusterOutcome o = new ClusterJob(spark, ReferenceData.settings(OptionalInt.of(3), 2, 8, 60, 500),
        data.frame(spark, 4), List.of("row"), data.features, null, ClusterSpace.FEATURES).execute();
    JsonNode ref = data.kmeans(3);
    List<Row> rows = o.assignments().orderBy("row").collectAsList();
    assertEquals(data.z.length, rows.size(), "one assignment per row");
    String[] ours = new String[rows.size()];
    String[] best = new String[rows.size()];
    for (int i = 0; i < ours.length; i++) {
      assertEquals(i, rows.get(i).getInt(0));
      ours[i] = String.valueOf(rows.get(i).getInt(rows.get(i).fieldIndex("cluster")));
      best[i] = ref.get("best_assignment").get(i).asText();
    }
    // the reference's best partition itself (R kmeans best_assignment): identical up to renumbering
    assertEquals(1.0, ReferenceData.adjustedRand(ours, best), 1e-12, "same partition as R's best");
    // scikit-learn adjusted_rand_score vs the cultivar labels; a rational of integers, so only rounding differs
    assertEquals(ref.get("adjusted_rand_index_vs_label").get("value").asDouble(),
        ReferenceData.adjustedRand(ours, data.labels), 1e-12, "ARI vs cultivar");
    assertArrayEquals(longs(ref.get("cluster_sizes")), o.result().sizes(), "sizes, numbered by decreasing size");
    assertEquals(ref.get("best_tot_withinss").asDouble(), o.result().wcss(), 1e-9 * 1270.75);
  }

  static long[] longs(JsonNode array) {
    long[] out = new long[array.size()];
    for (int i = 0; i < out.length; i++) {
      out[i] = array.get(i).asLong();
    }
    return out;
  }

  static long[] longs(List<?> values) {
    List<Long> copy = new ArrayList<>();
    for (Object v : values) {
      copy.add(((Number) v).longValue());
    }
    return copy.stream().mapToLong(Long::longValue).toArray();
  }
}
