package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.io.CentroidStore;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.Choices.KSelection;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.SparkSuite;
import java.util.ArrayList;
import java.util.List;
import java.util.OptionalInt;
import java.util.SplittableRandom;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.Test;

/**
 * The clustering job on data made in the test: invariance to the partitioning, the quality measures against
 * {@link BruteForce} (the published definitions), and degenerate inputs.
 *
 * <p>Rounding bounds used below. A centroid is a mean of at most 300 values below 12 in magnitude, summed in another
 * order than the brute force: it differs by at most 300 eps 12 = 8e-13 (checked at 1e-11). A within-cluster sum of squares is a sum of at
 * most 600 exact squared distances: relative difference at most 600 eps = 1.3e-13 (checked at 1e-11). A run reported
 * as converged had no row change cluster in its last pass (a single row moving shifts a centroid by far more than
 * cluster.tolerance x radius here), so its centroids are the means of its clusters up to that rounding, and
 * Calinski-Harabasz, Davies-Bouldin and the silhouette agree with the brute force to 1e-10 relative.
 */
class ClusterJobTest extends SparkSuite {
  static final double[][] CENTRES = {{0, 0, 0}, {6, 0, 0}, {0, 6, 3}};

  static JobSettings.Cluster settings(OptionalInt k, int kMax, KSelection by, int sample) {
    return new JobSettings.Cluster(true, ClusterSpace.SCORES, k, 2, kMax, by, 3, 50, 1e-6, sample, 100_000, 11, "",
        false, 10, 1000);
  }

  static ClusterOutcome run(Dataset<Row> points, JobSettings.Cluster s, int d) {
    return new ClusterJob(spark, s, points, List.of("id"), Blobs.columns(d), null, ClusterSpace.SCORES).execute();
  }

  @Test
  void oneThreeAndTwentyPartitionsAgreeAndQualityMatchesDefinitions() {
    Blobs data = new Blobs(21, CENTRES, new int[] {300, 200, 100}, 1.0);
    ClusterOutcome one = run(data.frame(spark, 1), settings(OptionalInt.empty(), 4, KSelection.CALINSKI_HARABASZ,
        1000), 3);
    ClusterResult r = one.result();
    assertEquals(3, r.k(), "Calinski-Harabasz picks the three blobs");
    assertArrayEquals(new long[] {300, 200, 100}, r.sizes(), "the blobs themselves, numbered by size");
    assertEquals(600, r.silhouetteSample(), "the sample is every row when silhouette-sample >= n");
    int[] lab = ints(labels(one));
    assertEquals(1.0, ReferenceData.adjustedRand(labels(one), strings(data.group)), 1e-12, "blobs recovered");
    ClusterResult.KScore chosen = r.selection().get(1);
    assertEquals(BruteForce.wcss(data.x, lab, 3), chosen.wcss(), 1e-11 * chosen.wcss());
    assertEquals(BruteForce.silhouette(data.x, lab, 3), chosen.silhouette(), 1e-10);
    assertEquals(BruteForce.silhouette(data.x, lab, 3), r.silhouette(), 1e-10);
    double ch = BruteForce.calinskiHarabasz(data.x, lab, 3);
    assertEquals(ch, chosen.calinskiHarabasz(), 1e-10 * ch);
    double db = BruteForce.daviesBouldin(data.x, lab, 3);
    assertEquals(db, chosen.daviesBouldin(), 1e-10 * db);
    double[][] means = BruteForce.means(data.x, lab, 3);
    for (int c = 0; c < 3; c++) {
      assertArrayEquals(means[c], r.centroids()[c], 1e-11, "centroid " + c + " is its cluster's mean");
    }
    for (int partitions : new int[] {3, 20}) {
      ClusterOutcome other = run(data.frame(spark, partitions), settings(OptionalInt.empty(), 4,
          KSelection.CALINSKI_HARABASZ, 1000), 3);
      assertSameClustering(one, other, partitions + " partitions");
    }
  }

  @Test
  void emptyPartitionsChangeNothing() {
    Blobs data = new Blobs(5, CENTRES, new int[] {6, 5, 4}, 0.8);
    Dataset<Row> sparse = data.frame(spark, 16);
    long empty = sparse.javaRDD().glom().collect().stream().filter(List::isEmpty).count();
    assertTrue(empty >= 1, "15 rows over 16 partitions leave at least one empty: " + empty);
    JobSettings.Cluster s = settings(OptionalInt.of(3), 8, KSelection.SILHOUETTE, 100);
    assertSameClustering(run(data.frame(spark, 1), s, 3), run(sparse, s, 3), "16 partitions, some empty");
  }

  @Test
  void duplicatePointsAndTooFewDistinct() {
    // 15 x (1, 1), 10 x (5, 1), 5 x (1, 7): three distinct points
    double[][] x = new double[30][];
    for (int i = 0; i < 30; i++) {
      x[i] = i < 15 ? new double[] {1, 1} : i < 25 ? new double[] {5, 1} : new double[] {1, 7};
    }
    Dataset<Row> points = frame(x, 2);
    ClusterOutcome o = run(points, settings(OptionalInt.of(3), 8, KSelection.SILHOUETTE, 100), 2);
    ClusterResult r = o.result();
    assertArrayEquals(new long[] {15, 10, 5}, r.sizes());
    assertArrayEquals(new double[] {1, 1}, r.centroids()[0], 1e-13);
    assertArrayEquals(new double[] {5, 1}, r.centroids()[1], 1e-13);
    assertArrayEquals(new double[] {1, 7}, r.centroids()[2], 1e-13);
    // the within-cluster sum of squares is 0 up to the rounding of the centroids (a few ulps of values <= 7: 30 (4 ulp(7))^2 < 1e-26)
    assertTrue(r.wcss() < 1e-20, "wcss " + r.wcss());
    // Rousseeuw: a(i) = 0 < b(i) for every point, so s(i) = 1; Davies-Bouldin: S_i = 0 up to rounding
    assertEquals(1.0, r.silhouette(), 1e-12);
    assertTrue(r.selection().get(0).daviesBouldin() < 1e-12);
    InvalidJobException k4 = assertThrows(InvalidJobException.class,
        () -> run(points, settings(OptionalInt.of(4), 8, KSelection.SILHOUETTE, 100), 2));
    assertTrue(k4.getMessage().contains("cluster.k = 4") && k4.getMessage().contains("only 3 distinct"),
        k4.getMessage());
    InvalidJobException range = assertThrows(InvalidJobException.class,
        () -> run(points, settings(OptionalInt.empty(), 5, KSelection.SILHOUETTE, 100), 2));
    assertTrue(range.getMessage().contains("cluster.k-range = 2..5") && range.getMessage().contains("3 distinct"),
        range.getMessage());
  }

  @Test
  void tooFewRowsAndEmptyInput() {
    Dataset<Row> three = frame(new double[][] {{0, 0}, {1, 0}, {0, 1}}, 2);
    InvalidJobException rows = assertThrows(InvalidJobException.class,
        () -> run(three, settings(OptionalInt.of(5), 8, KSelection.SILHOUETTE, 100), 2));
    assertTrue(rows.getMessage().contains("cluster.k = 5") && rows.getMessage().contains("only 3 points"),
        rows.getMessage());
    // a k-range from 1 is refused by the settings reader before any data is read (SettingsReaderTest)
    InvalidJobException empty = assertThrows(InvalidJobException.class,
        () -> run(frame(new double[0][], 2).limit(0), settings(OptionalInt.of(1), 8, KSelection.SILHOUETTE, 100), 2));
    assertTrue(empty.getMessage().contains("no rows"), empty.getMessage());
  }

  @Test
  void oneClusterAndRowsWithMissingValues() {
    SplittableRandom rnd = new SplittableRandom(9);
    double[][] x = new double[27][];
    for (int i = 0; i < 25; i++) {
      x[i] = new double[] {rnd.nextGaussian() * 2 + 1, rnd.nextGaussian() - 3};
    }
    x[25] = new double[] {Double.NaN, 1};
    x[26] = null; // a row whose pc_1 and pc_2 are null
    ClusterOutcome o = run(frame(x, 2), settings(OptionalInt.of(1), 8, KSelection.SILHOUETTE, 100), 2);
    ClusterResult r = o.result();
    double[][] valid = java.util.Arrays.copyOf(x, 25);
    double[] mean = BruteForce.means(valid, new int[25], 1)[0];
    assertArrayEquals(mean, r.centroids()[0], 1e-13, "k = 1: the centroid is the mean");
    double total = BruteForce.wcss(valid, new int[25], 1);
    assertEquals(total, r.wcss(), 1e-12 * total, "k = 1: wcss is the total sum of squares");
    assertArrayEquals(new long[] {25}, r.sizes());
    ClusterResult.KScore s = r.selection().get(0);
    assertTrue(Double.isNaN(s.silhouette()) && Double.isNaN(s.calinskiHarabasz())
        && Double.isNaN(s.daviesBouldin()), "the measures are undefined for one cluster");
    assertTrue(o.warnings().stream().anyMatch(w -> w.startsWith("2 rows have a null, NaN or infinite value")),
        o.warnings().toString());
    List<Row> a = o.assignments().orderBy("id").collectAsList();
    assertEquals(27, a.size(), "every row gets an assignment row");
    for (int i = 0; i < 27; i++) {
      Row row = a.get(i);
      if (i >= 25) {
        assertTrue(row.isNullAt(1) && row.isNullAt(2), "no cluster for a row with a missing value");
      } else {
        assertEquals(0, row.getInt(1));
        assertEquals(Math.sqrt(BruteForce.dist2(x[i], mean)), row.getDouble(2), 1e-12);
        assertNull(row.get(3), "no second-nearest centroid with k = 1");
      }
    }
  }

  @Test
  void entitiesWithSpreadInOriginalUnitsAndTablesRoundTrip() throws Exception {
    EntityData fleet = new EntityData();
    JobSettings.Cluster s = new JobSettings.Cluster(true, ClusterSpace.SCORES, OptionalInt.of(3), 2, 8,
        KSelection.SILHOUETTE, 3, 50, 1e-6, 100, 100_000, 11, "host", true, 10, 1000);
    ClusterOutcome o = new ClusterJob(spark, s, fleet.frame(spark), List.of("host", "t"), List.of("pc_1", "pc_2"),
        fleet.model, ClusterSpace.SCORES).execute();
    ClusterResult r = o.result();
    assertEquals("host", r.entity());
    assertEquals(List.of("pc_1", "pc_2", "pc_1_sd", "pc_2_sd"), r.dimensions());
    assertEquals(List.of("cpu", "mem", "net"), r.features());
    List<Row> a = o.assignments().orderBy("host").collectAsList();
    assertEquals(EntityData.HOSTS, a.size(), "one assignment per host");
    assertEquals(List.of("host", "cluster", "distance", "second_distance"), List.of(a.get(0).schema().fieldNames()));
    double[][] y = fleet.hostPoints();
    String[] ours = new String[EntityData.HOSTS];
    int[] lab = new int[EntityData.HOSTS];
    for (int h = 0; h < EntityData.HOSTS; h++) {
      assertEquals(EntityData.host(h), a.get(h).getString(0));
      lab[h] = a.get(h).getInt(1);
      ours[h] = String.valueOf(lab[h]);
    }
    assertEquals(1.0, ReferenceData.adjustedRand(ours, strings(fleet.group)), 1e-12, "the three host groups");
    // host means and sds computed directly (EntityData.hostPoints); cluster centroids are their means
    double[][] means = BruteForce.means(y, lab, 3);
    for (int c = 0; c < 3; c++) {
      assertArrayEquals(means[c], r.centroids()[c], 1e-12, "centroid " + c);
      assertArrayEquals(fleet.original(means[c]), r.centroidsOriginal()[c], 1e-12 * 300, "orig of centroid " + c);
    }
    for (int h = 0; h < EntityData.HOSTS; h++) {
      assertEquals(Math.sqrt(BruteForce.dist2(y[h], means[lab[h]])), a.get(h).getDouble(2), 1e-12, "distance");
      double second = Double.POSITIVE_INFINITY;
      for (int c = 0; c < 3; c++) {
        second = c == lab[h] ? second : Math.min(second, Math.sqrt(BruteForce.dist2(y[h], means[c])));
      }
      assertEquals(second, a.get(h).getDouble(3), 1e-12, "second distance");
    }
    assertProfiles(fleet, y, lab, r);
    assertTablesRoundTrip(o, y);
  }

  /**
   * Profiles against the mapped host points computed directly: x_h = mean + scale (V y_h), overall mean and sample sd
   * (n - 1) over the 12 hosts, cluster mean = the mapped centroid; standardised difference = (cluster - overall) / sd.
   */
  static void assertProfiles(EntityData fleet, double[][] y, int[] lab, ClusterResult r) {
    int n = y.length;
    double[][] x = new double[n][];
    for (int h = 0; h < n; h++) {
      x[h] = fleet.original(y[h]);
    }
    double[] overall = BruteForce.means(x, new int[n], 1)[0];
    for (int c = 0; c < 3; c++) {
      ClusterResult.Profile p = r.profiles().get(c);
      assertEquals(c, p.cluster());
      assertEquals(r.sizes()[c], p.size());
      assertEquals(r.sizes()[c] / (double) n, p.share(), 1e-15);
      assertEquals(3, p.distinguishing().size(), "all three features (fewer than five)");
      double previous = Double.POSITIVE_INFINITY;
      for (ClusterResult.FeatureShift f : p.distinguishing()) {
        int j = fleet.model.features().indexOf(f.feature());
        double sd = 0;
        for (double[] row : x) {
          sd += (row[j] - overall[j]) * (row[j] - overall[j]) / (n - 1);
        }
        sd = Math.sqrt(sd);
        assertEquals(overall[j], f.overallMean(), 1e-12 * 300);
        assertEquals(r.centroidsOriginal()[c][j], f.clusterMean(), 0.0);
        assertEquals((f.clusterMean() - overall[j]) / sd, f.standardizedDifference(), 1e-10);
        assertTrue(Math.abs(f.standardizedDifference()) <= previous, "largest |difference| first");
        previous = Math.abs(f.standardizedDifference());
      }
    }
  }

  static void assertTablesRoundTrip(ClusterOutcome o, double[][] y) throws Exception {
    String folder = java.nio.file.Files.createTempDirectory("eigenmill-clusters-").resolve("clusters").toString();
    ClusterJob.writeTables(o, folder);
    assertEquals(y.length, spark.read().parquet(folder + "/assignments").count());
    assertEquals(List.of("cluster", "pc_1", "pc_2", "pc_1_sd", "pc_2_sd", "orig_cpu", "orig_mem", "orig_net"),
        List.of(spark.read().parquet(folder + "/centroids").columns()));
    assertEquals(9, spark.read().parquet(folder + "/profiles").count(), "3 clusters x 3 features");
    List<Row> ks = spark.read().parquet(folder + "/k-selection").collectAsList();
    assertEquals(1, ks.size());
    assertTrue(ks.get(0).getBoolean(ks.get(0).fieldIndex("chosen")));
    CentroidStore.StoredCentroids stored = CentroidStore.read(spark, folder);
    assertEquals(o.result().dimensions(), stored.dimensions());
    for (int c = 0; c < 3; c++) {
      assertArrayEquals(o.result().centroids()[c], stored.centroids()[c], 0.0, "stored centroid " + c);
    }
    // new rows labelled with the stored centroids, against a brute-force nearest centroid
    double[][] fresh = {{-2.5, 0.3, 0.2, 0.4}, {2.9, -0.2, 0.5, 0.1}, {0.1, 3.7, 0.3, 0.3}, {9, 9, 1, 1}, null};
    StructType schema = new StructType().add("name", DataTypes.StringType);
    for (String dim : stored.dimensions()) {
      schema = schema.add(dim, DataTypes.DoubleType, true);
    }
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < fresh.length; i++) {
      Object[] v = new Object[5];
      v[0] = "n" + i;
      for (int l = 0; l < 4; l++) {
        v[l + 1] = fresh[i] == null ? null : fresh[i][l];
      }
      rows.add(RowFactory.create(v));
    }
    List<Row> labelled = NearestCentroid.label(spark.createDataFrame(rows, schema), stored.dimensions(),
        stored.centroids()).orderBy("name").collectAsList();
    for (int i = 0; i < fresh.length; i++) {
      Row row = labelled.get(i);
      assertEquals("n" + i, row.getString(0), "other columns are kept");
      if (fresh[i] == null) {
        assertTrue(row.isNullAt(5) && row.isNullAt(6), "no label for a row with missing values");
        continue;
      }
      int c = BruteForce.nearest(fresh[i], stored.centroids());
      assertEquals(c, row.getInt(5));
      assertEquals(Math.sqrt(BruteForce.dist2(fresh[i], stored.centroids()[c])), row.getDouble(6), 1e-12);
    }
    InvalidJobException missing = assertThrows(InvalidJobException.class,
        () -> CentroidStore.read(spark, folder + "/nowhere"));
    assertTrue(missing.getMessage().contains(folder + "/nowhere"), missing.getMessage());
    InvalidJobException notCentroids = assertThrows(InvalidJobException.class,
        () -> CentroidStore.read(spark, folder + "/profiles"));
    assertTrue(notCentroids.getMessage().contains(folder + "/profiles"), notCentroids.getMessage());
  }

  static void assertSameClustering(ClusterOutcome a, ClusterOutcome b, String what) {
    ClusterResult ra = a.result();
    ClusterResult rb = b.result();
    assertEquals(ra.k(), rb.k(), what + ": chosen k");
    assertArrayEquals(ra.sizes(), rb.sizes(), what + ": sizes");
    for (int i = 0; i < ra.selection().size(); i++) {
      double wa = ra.selection().get(i).wcss();
      assertEquals(wa, rb.selection().get(i).wcss(), 1e-11 * wa, what + ": wcss, k = "
          + ra.selection().get(i).k());
    }
    assertEquals(1.0, ReferenceData.adjustedRand(labels(a), labels(b)), 1e-12, what + ": same partition");
    for (int c = 0; c < ra.k(); c++) {
      assertArrayEquals(ra.centroids()[c], rb.centroids()[c], 1e-11, what + ": centroid " + c);
    }
  }

  /** Cluster of each row, in key order. */
  static String[] labels(ClusterOutcome o) {
    List<Row> rows = o.assignments().orderBy("id").collectAsList();
    String[] out = new String[rows.size()];
    for (int i = 0; i < out.length; i++) {
      out[i] = String.valueOf(rows.get(i).getInt(1));
    }
    return out;
  }

  static int[] ints(String[] s) {
    return java.util.Arrays.stream(s).mapToInt(Integer::parseInt).toArray();
  }

  static String[] strings(int[] v) {
    return java.util.Arrays.stream(v).mapToObj(String::valueOf).toArray(String[]::new);
  }

  /** Rows {@code id}, pc_1..pc_d; a null row of x becomes null coordinates. */
  static Dataset<Row> frame(double[][] x, int d) {
    StructType schema = new StructType().add("id", DataTypes.StringType, false);
    for (String c : Blobs.columns(d)) {
      schema = schema.add(c, DataTypes.DoubleType, true);
    }
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < x.length; i++) {
      Object[] v = new Object[d + 1];
      v[0] = String.format("r%04d", i);
      for (int l = 0; l < d; l++) {
        v[l + 1] = x[i] == null ? null : x[i][l];
      }
      rows.add(RowFactory.create(v));
    }
    return spark.createDataFrame(rows, schema).repartition(2);
  }
}
