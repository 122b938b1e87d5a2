package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.junit.jupiter.api.Test;

/** Clustering through the job runner: fit + k-means in one run, then labelling new rows with the saved centroids. */
class ClusterStageTest extends SparkSuite {

  @Test
  void fitClustersTheStandardizedFeaturesAndApplyLabelsWithSavedCentroids() throws Exception {
    JsonNode ref = Datasets.reference("wine");
    List<String> features = Datasets.strings(ref.get("feature_columns"));
    String csv = Datasets.csv("wine").toString();
    Path dir = JobFiles.scratch("cluster-run");
    Path fit = dir.resolve("fit");
    RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + csv + "\"\ninput.format = csv\n"
        + "features.columns = " + JobFiles.quoted(features) + "\nprepare.scaling = standardize\n"
        + "cluster { enabled = true, space = features, k = 3, restarts = 10 }\n"
        + "output.path = \"" + fit + "\"\n"));
    ClusterResult c = run.clusters();
    // wine.reference.json, kmeans.standardized k=3: best within-cluster sum of squares over many restarts of R's kmeans (z-scores with
    // the n-1 sd, as prepare.scaling = standardize); Lloyd from a k-means|| start reaches it in about a third of
    // single starts (README table), so 10 restarts find it; 1e-6 relative as the issue asks
    JsonNode k3 = ref.get("kmeans").get("standardized").get("k=3");
    double best = k3.get("best_tot_withinss").asDouble();
    assertEquals(best, c.wcss(), 1e-6 * best);
    long[] sizes = c.sizes().clone();
    Arrays.sort(sizes);
    long[] expected = Datasets.doubles(k3.get("cluster_sizes")).length == 3
        ? Arrays.stream(Datasets.doubles(k3.get("cluster_sizes"))).mapToLong(x -> (long) x).sorted().toArray()
        : null;
    assertArrayEquals(expected, sizes, "cluster sizes as in the reference (65, 62, 51)");
    for (String part : List.of("assignments", "centroids", "profiles", "k-selection")) {
      assertTrue(Files.exists(fit.resolve("clusters").resolve(part)), part);
    }
    JsonNode summary = new ObjectMapper().readTree(fit.resolve("summary.json").toFile());
    assertEquals(3, summary.get("clusters").get("k").asInt());
    assertEquals(c.wcss(), summary.get("clusters").get("wcss").asDouble(), 0.0);
    assertTrue(Files.readString(fit.resolve("report.html")).contains("section-clusters"));

    // Labelling: the fitted rows labelled with the saved centroids of the k-means run. Clustering ran on the prepared
    // features, and the centroids table says so, so the apply job prepares the features with the model's means and
    // scales as the fit did: every row's nearest centroid and distance are those of the fit's assignments (which are
    // the nearest-centroid labels of the final centroids), as a multiset (the table has no keys): the same clusters,
    // and distances equal within 1e-9 (exact Euclidean distances recomputed in another chunk of rows; values O(1))
    Path apply = dir.resolve("apply");
    RunResult applied = JobRunner.run(spark, JobFiles.settings("input.path = \"" + csv + "\"\ninput.format = csv\n"
        + "apply.model = \"" + fit + "\"\napply.centroids = \"" + fit.resolve("clusters") + "\"\n"
        + "output.path = \"" + apply + "\"\n"));
    assertEquals("features", applied.labels().space().word());
    Dataset<Row> labels = spark.read().parquet(apply.resolve("labels").toString()).select("cluster", "distance");
    Dataset<Row> assignments = spark.read().parquet(fit.resolve("clusters/assignments").toString())
        .select("cluster", "distance");
    assertEquals(178, labels.count());
    List<Row> got = labels.orderBy("cluster", "distance").collectAsList();
    List<Row> want = assignments.orderBy("cluster", "distance").collectAsList();
    assertEquals(want.size(), got.size());
    for (int i = 0; i < want.size(); i++) {
      assertEquals(want.get(i).getInt(0), got.get(i).getInt(0), "cluster of the row ranked " + i);
      assertEquals(want.get(i).getDouble(1), got.get(i).getDouble(1), 1e-9, "distance of the row ranked " + i);
    }
  }

  @Test
  void savedScoreCentroidsLabelNewRows() throws Exception {
    String csv = Datasets.csv("usarrests").toString();
    Path dir = JobFiles.scratch("label-run");
    Path fit = dir.resolve("fit");
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + csv + "\"\ninput.format = csv\n"
        + "features.keys = [state]\nprepare.scaling = standardize\nreduce.components = 4\n"
        + "cluster { enabled = true, k = 4, restarts = 40 }\noutput.path = \"" + fit + "\"\n"));
    Path apply = dir.resolve("apply");
    JobRunner.run(spark, JobFiles.settings("input.path = \"" + csv + "\"\ninput.format = csv\n"
        + "features.keys = [state]\napply.model = \"" + fit + "\"\napply.centroids = \"" + fit.resolve("clusters")
        + "\"\noutput.path = \"" + apply + "\"\n"));
    // with all 4 components the score space is an isometry of the standardized feature space, so nearest-centroid
    // labels of the same rows are the k-means assignments themselves (a fixed point of Lloyd's iteration)
    Dataset<Row> assigned = spark.read().parquet(fit.resolve("clusters/assignments").toString())
        .select("state", "cluster");
    Dataset<Row> labelled = spark.read().parquet(apply.resolve("labels").toString()).select("state", "cluster");
    assertEquals(50, labelled.count());
    assertEquals(0, assigned.exceptAll(labelled).count(), "labels equal the fit's assignments");
    // usarrests.reference.json, kmeans.standardized k=4: best within-cluster sum of squares 56.40317346 with sizes 16, 13, 13, 8; Lloyd
    // reaches it from about 14% of single starts (README table), so 40 restarts miss it with probability 0.86^40 < 0.3%
    // (and the run is seeded, so the outcome is fixed)
    JsonNode summary = new ObjectMapper().readTree(fit.resolve("summary.json").toFile());
    assertEquals(56.40317346, summary.get("clusters").get("wcss").asDouble(), 1e-6 * 56.40317346);
  }
}
