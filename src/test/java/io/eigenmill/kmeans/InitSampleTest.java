package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.Choices.KSelection;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.SparkSuite;
import java.util.OptionalInt;
import org.junit.jupiter.api.Test;

/**
 * Where k-means|| chooses its starting centroids: over a seeded sample on the driver ({@code cluster.init-sample}
 * rows, the default) or over all rows (0, two rounds and a weights pass over the cache). The checks compare the two
 * against each other and against the blobs the data was made from (made in the test, no outside data): the
 * initialisation may change, the clustering of well-separated blobs may not.
 */
class InitSampleTest extends SparkSuite {
  /** Four blobs in 4 dimensions, 10 standard deviations apart: every row's blob is its nearest centre. */
  static final double[][] CENTRES = {{0, 0, 0, 0}, {10, 0, 0, 0}, {0, 10, 0, 0}, {0, 0, 10, 10}};

  static JobSettings.Cluster settings(int k, int kMax, int initSample) {
    return new JobSettings.Cluster(true, ClusterSpace.SCORES, k > 0 ? OptionalInt.of(k) : OptionalInt.empty(), 2,
        kMax, KSelection.SILHOUETTE, 3, 50, 1e-6, 500, initSample, 5, "", false, 10, 0);
  }

  @Test
  void aSampleOfAllRowsAndTheFullPassesGiveTheSameClustering() {
    Blobs data = new Blobs(31, CENTRES, new int[] {900, 700, 500, 300}, 1.0);
    ClusterOutcome sampled = ClusterJobTest.run(data.frame(spark, 3), settings(0, 6, 100_000), 4);
    ClusterOutcome full = ClusterJobTest.run(data.frame(spark, 3), settings(0, 6, 0), 4);
    assertEquals(2400, sampled.result().initSample(), "2,400 rows fit in the sample: it is every row");
    assertEquals(0, full.result().initSample());
    // the same rows give the same candidates; only the order of the sums differs
    ClusterJobTest.assertSameClustering(sampled, full, "sample of every row vs passes over the cache");
    // the same starting centroids take the same Lloyd iterations: all rows cost the rounds and the weights pass
    assertEquals(sampled.passes() + ParallelKMeans.ROUNDS + 1, full.passes(), "passes");
  }

  @Test
  void aSmallSampleFindsTheSameBlobsWithFewerPasses() {
    Blobs data = new Blobs(37, CENTRES, new int[] {6000, 5000, 4000, 3000}, 1.0);
    ClusterOutcome sampled = ClusterJobTest.run(data.frame(spark, 4), settings(4, 4, 400), 4);
    ClusterOutcome full = ClusterJobTest.run(data.frame(spark, 4), settings(4, 4, 0), 4);
    ClusterResult r = sampled.result();
    assertEquals(400, r.initSample());
    assertArrayEquals(new long[] {6000, 5000, 4000, 3000}, r.sizes(), "the blobs, numbered by size");
    assertEquals(1.0, ReferenceData.adjustedRand(ClusterJobTest.labels(sampled), ClusterJobTest.labels(full)),
        1e-12, "the same partition as with k-means|| over all rows");
    assertEquals(full.result().wcss(), r.wcss(), 1e-11 * r.wcss(), "the same local optimum");
  }

  @Test
  void aSampleCrowdedByDuplicatesFallsBackToAllRows() {
    // three distinct points, 2,000 copies each: the sample of 10 rows holds copies of one point only (equal rows
    // share their identity and so their unit number), yet the rows have the three points k = 3 needs
    double[][] x = new double[6000][];
    for (int i = 0; i < x.length; i++) {
      x[i] = CENTRES[i % 3].clone();
    }
    ClusterOutcome o = ClusterJobTest.run(ClusterJobTest.frame(x, 4), settings(3, 3, 10), 4);
    assertArrayEquals(new long[] {2000, 2000, 2000}, o.result().sizes());
    assertEquals(0.0, o.result().wcss(), 0.0);
    assertEquals(0, o.result().initSample(), "reported: the initialisation ran over all rows");
    assertTrue(o.passes() >= 1 + ParallelKMeans.ROUNDS + 1 + 1, "the initialisation went over all rows: "
        + o.passes() + " passes");
  }
}
