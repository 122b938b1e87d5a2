package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.io.PcaModel;
import io.eigenmill.kmeans.ClusterResult;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.monitor.ReconstructionResult;
import io.eigenmill.record.RunResult;
import io.eigenmill.testing.FleetFixture;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;

/** Which sections a run gets, and that every number shown is the record's value, formatted. */
class ReportModelTest {
  private static final FleetFixture FLEET = new FleetFixture();

  @Test
  void fitOnlyHasHeaderWarningsSpectrumAndLoadings() {
    ReportModel m = ReportModel.of(FLEET.fitOnly());
    assertEquals(List.of("section-header", "section-warnings", "section-scree", "section-loadings"), m.sectionIds());
    assertNull(m.scores());
    assertNull(m.monitoring());
    assertNull(m.clusters());
    assertNull(m.compression());
    assertNull(m.drift());
  }

  @Test
  void sectionsFollowTheRecordsEachRunHas() {
    assertEquals(List.of("section-header", "section-warnings", "section-scree", "section-loadings", "section-scores",
        "section-monitoring"), ReportModel.of(FLEET.fitWithMonitor()).sectionIds());
    assertEquals(List.of("section-header", "section-scree", "section-loadings", "section-scores",
        "section-monitoring"), ReportModel.of(FLEET.applyWithMonitor()).sectionIds());
    assertEquals(List.of("section-header", "section-warnings", "section-scree", "section-loadings", "section-scores",
        "section-clusters"), ReportModel.of(FLEET.withClusters()).sectionIds());
    assertEquals(List.of("section-header", "section-warnings", "section-scree", "section-loadings",
        "section-compression"), ReportModel.of(FLEET.withReconstruction()).sectionIds());
    assertEquals(List.of("section-header", "section-scree", "section-loadings", "section-drift"),
        ReportModel.of(FLEET.withDrift()).sectionIds());
    assertEquals(9, ReportModel.of(FLEET.full()).sectionIds().size());
  }

  @Test
  void headerShowsTheFitCounts() {
    RunResult run = FLEET.fitOnly();
    HeaderModel h = ReportModel.of(run).header();
    assertEquals("edge-cache-fleet", h.job());
    assertEquals("fit", h.kind());
    assertEquals("812", h.fact("Rows read"));
    assertEquals("800", h.fact("Rows used"));
    assertTrue(h.fact("Rows dropped").startsWith("12 (rows with a missing value; prepare.missing = drop-rows"),
        h.fact("Rows dropped"));
    assertEquals("1: psu_count", h.fact("Dropped as constant"));
    assertEquals(run.plan().methodReason(), h.fact("Why this method"));
    assertEquals(run.fit().kRule(), h.fact("Rule for k"));
    assertEquals(run.fit().blas(), h.fact("BLAS / LAPACK"));
    assertEquals(Integer.toString(FLEET.k), h.fact("Components kept"));
    assertEquals("features.columns: '*' matched site (string), which is not numeric: skipped", h.fact("Plan note"));
    assertTrue(h.fact("Scaling").startsWith("standardize"), h.fact("Scaling"));
    assertEquals(List.of(new Fact("disk_read_mbps", "7"), new Fact("fan_rpm", "5")), h.missingByFeature());
    assertEquals(List.of("plan", "moments", "covariance", "model", "outputs"),
        h.timings().stream().map(HeaderModel.Timing::stage).toList());
    assertEquals("41.7 s", h.timings().get(1).text());
    assertEquals("55.8 s", h.totalTime());
  }

  @Test
  void applyHeaderSaysWhichModelAndWhatIsNotRecorded() {
    HeaderModel h = ReportModel.of(FLEET.applyWithMonitor()).header();
    assertEquals("apply", h.kind());
    assertEquals("/data/edge-fleet/pca/2026-02/model", h.fact("Model applied"));
    assertEquals("800", h.fact("Rows the model was fitted on"));
    assertEquals("800", h.fact("Rows scored"));
    assertEquals("k of the applied model", h.fact("Rule for k"));
    assertEquals("not recorded for this run", h.fact("BLAS / LAPACK"));
    assertNull(h.fact("Rows read"));
  }

  @Test
  void screeShowsTheSpectrumRatiosAndTheTarget() {
    RunResult run = FLEET.fitOnly();
    ScreeModel s = ReportModel.of(run).scree();
    double[] ratios = run.fit().spectrum().varianceShares();
    double[] cumulative = run.fit().spectrum().cumulativeVarianceShares();
    assertEquals(FLEET.d, s.components().size());
    for (ScreeModel.Component c : s.components()) {
      int i = c.number() - 1;
      assertEquals(run.fit().spectrum().eigenvalues()[i], c.eigenvalue());
      assertEquals(ratios[i], c.ratio());
      assertEquals(cumulative[i], c.cumulative());
      assertEquals(ratios[i] * 100, Double.parseDouble(c.ratioText().replace("%", "")), 0.005 + 1e-12);
      assertEquals(i < FLEET.k, c.kept());
    }
    assertEquals(0.9, s.target());
    assertEquals(FLEET.k, s.k());
    assertTrue(s.complete());
    assertFalse(s.logScale(), "a correlation spectrum of 18 features spans less than three decades here");
  }

  @Test
  void fixedKHasNoTargetLine() {
    RunResult fixed = FLEET.fitOnly();
    var settings = FleetFixture.settings("reduce.components = 4\n");
    var plan = FLEET.plan(settings, "fit");
    RunResult run = new RunResult(plan, FLEET.fit(plan), fixed.model(), null, null, null, null, null, "/o",
        Map.of(), List.of(), 1);
    assertTrue(Double.isNaN(ReportModel.of(run).scree().target()));
  }

  @Test
  void applyScreeComesFromTheModelAndWideSpectraUseALogAxis() {
    List<String> names = new ArrayList<>();
    for (int j = 0; j < 100; j++) {
      names.add("sensor_" + j);
    }
    double[] eigen = new double[15];
    for (int i = 0; i < eigen.length; i++) {
      eigen[i] = 1e3 * Math.pow(10, -0.5 * i);
    }
    PcaModel model = FleetFixture.model(names, 5, eigen);
    ReportModel m = ReportModel.of(FleetFixture.applyRun(model, List.of()));
    assertTrue(m.scree().logScale());
    assertFalse(m.scree().complete());
    assertEquals(15, m.scree().computed());
    assertEquals(eigen[2] / model.totalVariance(), m.scree().components().get(2).ratio(), 1e-15);
    assertEquals(LoadingsModel.MAX_FEATURES, m.loadings().rows().size());
    assertEquals(40, m.loadings().featuresHidden());
    assertTrue(m.header().fact("Features used").startsWith("100: sensor_0, sensor_1,"));
    assertTrue(m.header().fact("Features used").endsWith(", sensor_29 and 70 more"), m.header().fact("Features used"));
  }

  @Test
  void wideReconstructionListsTheLeastKeptFeatures() {
    List<String> names = new ArrayList<>();
    List<ReconstructionResult.FeatureError> errors = new ArrayList<>();
    for (int j = 0; j < 100; j++) {
      names.add("f" + j);
      errors.add(new ReconstructionResult.FeatureError("f" + j, j, 2 * j, 1 - ((j * 37) % 100) / 200.0));
    }
    PcaModel model = FleetFixture.model(names, 2, new double[] {2, 1});
    RunResult bare = FleetFixture.applyRun(model, List.of());
    RunResult run = new RunResult(bare.plan(), null, model, null, new ReconstructionResult(2, 10, errors), null, null,
        null, "/o", Map.of(), List.of(), 1);
    CompressionModel m = ReportModel.of(run).compression();
    assertEquals(CompressionModel.MAX_FEATURES, m.features().size());
    assertEquals(100, m.featuresTotal());
    assertEquals(0.505, m.features().get(0).varianceKept(), 1e-12);
    assertEquals(0.505 + 0.005 * (CompressionModel.MAX_FEATURES - 1), m.features().get(59).varianceKept(), 1e-12);
  }

  @Test
  void loadingsAreGroupedByStrongestComponentAndEqualTheModel() {
    PcaModel model = FLEET.model;
    LoadingsModel l = ReportModel.of(FLEET.fitOnly()).loadings();
    assertEquals(model.d(), l.rows().size());
    int previousGroup = -1;
    double previous = Double.POSITIVE_INFINITY;
    double maxAbs = 0;
    for (LoadingsModel.Row r : l.rows()) {
      int j = model.features().indexOf(r.feature());
      for (int c = 0; c < model.k(); c++) {
        assertEquals(model.loading(j, c), r.values()[c], "loading of " + r.feature() + " on PC" + (c + 1));
        assertTrue(Math.abs(r.values()[c]) <= Math.abs(r.values()[r.group()]), r.feature() + " group");
        maxAbs = Math.max(maxAbs, Math.abs(r.values()[c]));
      }
      assertTrue(r.group() >= previousGroup, "groups in component order at " + r.feature());
      if (r.group() == previousGroup) {
        assertTrue(r.values()[r.group()] <= previous, "descending loading within a group at " + r.feature());
      }
      previousGroup = r.group();
      previous = r.values()[r.group()];
    }
    assertEquals(maxAbs, l.maxAbs());
    assertEquals(Math.min(3, model.k()), l.top().size());
    LoadingsModel.TopList first = l.top().get(0);
    double largest = 0;
    for (int j = 0; j < model.d(); j++) {
      largest = Math.max(largest, Math.abs(model.loading(j, 0)));
    }
    assertEquals(largest, Math.abs(first.bars().get(0).value()));
    for (int i = 1; i < first.bars().size(); i++) {
      assertTrue(Math.abs(first.bars().get(i).value()) <= Math.abs(first.bars().get(i - 1).value()));
    }
  }

  @Test
  void scoreMapUsesTheSampleAndLabelsAxesWithVarianceShares() {
    RunResult run = FLEET.withClusters();
    ScoreMapModel s = ReportModel.of(run).scores();
    assertEquals(List.of("chart-scores-pc1-pc2", "chart-scores-pc1-pc3"),
        s.plots().stream().map(ScoreMapModel.Plot::id).toList());
    String share = Fmt.percent(run.fit().spectrum().varianceShares()[1], 2);
    assertEquals("PC2 (" + share + " of variance)", s.plots().get(0).yLabel());
    assertEquals(run.sample().scores().length, s.sampleSize());
    assertEquals(3, s.legend().size());
    assertEquals("cluster 1 (" + Fmt.count(run.clusters().sizes()[1]) + " rows)", s.legend().get(1).label());
  }

  @Test
  void oneComponentGetsOneScoreChart() {
    PcaModel model = FleetFixture.model(List.of("a", "b", "c"), 1, new double[] {2, 1, 0.5});
    RunResult bare = FleetFixture.applyRun(model, List.of());
    RunResult run = new RunResult(bare.plan(), null, model, null, null, null, null,
        new io.eigenmill.monitor.ScoreSample(List.of("host"), List.of(List.of("h1"), List.of("h2")),
            new double[][] {{0.5}, {-0.5}}, null), "/o", Map.of(), List.of(), 1);
    ScoreMapModel s = ReportModel.of(run).scores();
    assertEquals(1, s.plots().size());
    assertEquals(-1, s.plots().get(0).y());
  }

  /**
   * The expected count beside the observed ones: n (1 - confidence), and the central 95% of Binomial(n, 1 - c)
   * recomputed here with Commons Math's binomial quantiles.
   */
  @Test
  void monitoringShowsTheExpectedCountAndItsChanceRange() {
    RunResult run = FLEET.fitWithMonitor();
    MonitorResult r = run.monitor();
    MonitoringModel m = ReportModel.of(run).monitoring();
    double p = 1 - r.confidence();
    org.apache.commons.math3.distribution.BinomialDistribution b =
        new org.apache.commons.math3.distribution.BinomialDistribution(null, (int) r.rowsScored(), p);
    int lo = b.inverseCumulativeProbability(0.025);
    int hi = b.inverseCumulativeProbability(0.975);
    Fact card = m.counts().stream().filter(f -> f.label().startsWith(MonitoringModel.EXPECTED_LABEL)).findFirst()
        .orElseThrow();
    assertEquals("about " + Fmt.count(Math.round(r.rowsScored() * p)), card.value());
    assertTrue(card.label().contains("1.0% of rows; 95% range " + Fmt.count(lo) + " to " + Fmt.count(hi)),
        card.label());
    String against = Fact.find(m.limits(), MonitoringModel.AGAINST_CHANCE_LABEL);
    assertTrue(against.startsWith("T2 " + Fmt.count(r.flaggedT2()) + " (" + (r.flaggedT2() > hi ? "above"
        : r.flaggedT2() < lo ? "below" : "within") + " the chance range), Q " + Fmt.count(r.flaggedQ())), against);
    assertTrue(against.contains(Fmt.count(lo) + " to " + Fmt.count(hi) + " in 95% of runs"), against);
    String html = HtmlReport.render(run);
    assertTrue(html.contains(Html.esc(against)), "the report shows the comparison");
  }

  @Test
  void monitoringCountsLimitsAndTopRowsAreTheRecords() {
    RunResult run = FLEET.fitWithMonitor();
    MonitorResult r = run.monitor();
    MonitoringModel m = ReportModel.of(run).monitoring();
    assertEquals(Fmt.count(r.flaggedT2()), Fact.find(m.counts(), "Flagged by T2"));
    assertEquals(Fmt.count(r.flaggedQ()), Fact.find(m.counts(), "Flagged by Q"));
    assertEquals("99.0%", m.confidence());
    assertTrue(Fact.find(m.limits(), "T2 limit").startsWith(Fmt.num(r.t2Limit()) + " — F distribution"));
    assertTrue(m.time(), "ts positions are epoch seconds");
    assertEquals(List.of("host", "ts"), m.keyNames());
    assertEquals(r.top().size(), m.top().size());
    MonitorResult.FlaggedRow first = r.top().get(0);
    MonitoringModel.TopRow shown = m.top().get(0);
    assertEquals(first.keys(), shown.keys());
    assertEquals(Fmt.num(first.q()), shown.q());
    double best = first.qContributions().stream().mapToDouble(MonitorResult.Contribution::value).max().orElseThrow();
    assertEquals(Fmt.num(best, 3), shown.contributions().get(0).value());
    assertEquals(MonitoringModel.CONTRIBUTIONS, shown.contributions().size());
    int over = 0;
    for (int i = 0; i < r.series().t2().length; i++) {
      over += m.t2Over(i) ? 1 : 0;
    }
    assertEquals(r.flaggedT2(), over, "the fixture's series is every scored row");
  }

  /** P(X <= m) for X ~ Binomial(n, p), by summing the probability mass function (brute force). */
  private static double binomialCdf(long n, double p, long m) {
    double sum = 0;
    for (long x = 0; x <= m; x++) {
      double c = 1;
      for (long i = 0; i < x; i++) {
        c = c * (n - i) / (i + 1);
      }
      sum += c * Math.pow(p, x) * Math.pow(1 - p, n - x);
    }
    return sum;
  }

  @Test
  void bucketSeriesShowsSharesAgainstTheExpectedShareAndNamesTheKeyColumns() {
    RunResult run = FLEET.applyWithBuckets();
    MonitorResult r = run.monitor();
    MonitoringModel m = ReportModel.of(run).monitoring();
    assertTrue(m.buckets() && m.time());
    assertEquals(0.01, m.expected(), 1e-15);
    // brute force over the fixture's rows: rows five minutes apart, hour buckets from START
    int excess = 0;
    for (boolean t2 : new boolean[] {true, false}) {
      for (int b = 0; b < m.position().length; b++) {
        long rows = 0;
        long over = 0;
        for (int i = 0; i < FleetFixture.N; i++) {
          if (i * 300L / FleetFixture.BUCKET == b) {
            rows++;
            over += t2 ? (FLEET.t2[i] > r.t2Limit() ? 1 : 0) : (FLEET.q[i] > r.qLimit() ? 1 : 0);
          }
        }
        assertEquals(over / (double) rows, m.share(t2, b), 0.0, "share of bucket " + b);
        // above chance: the count exceeds the 0.999 quantile of Binomial(rows, 0.01): P(X <= over - 1) >= 0.999
        boolean expected = over > 0 && binomialCdf(rows, 0.01, over - 1) >= MonitoringModel.BUCKET_CHANCE;
        assertEquals(expected, m.bucketExcess(t2, b), "bucket " + b + ": " + over + " of " + rows);
        excess += expected ? 1 : 0;
      }
    }
    assertEquals(0, excess, "the fixture's rows are ordinary hour by hour (at most 2 of 12 flagged)");
    MonitoringModel burst = ReportModel.of(FLEET.applyWithBuckets(20)).monitoring();
    assertTrue(burst.bucketExcess(false, 20), "12 of 12 rows flagged in an hour: P(X >= 12) = 1e-24");
    assertEquals(1.0, burst.share(false, 20), 0.0);
    assertTrue(m.caption().startsWith("Each point is one time bucket of ts (buckets of 3600 s, 1.00 hours): the "
        + "share of the bucket's rows above the row limit (67 buckets of 8 to 12 rows)"), m.caption());
    // 800 rows five minutes apart: 66 full hours of 12 rows and a last hour of 8 (brute force: 800 = 66 x 12 + 8)
    assertTrue(m.caption().contains("1 - confidence = 1.0%"), m.caption());
    assertEquals(List.of("host", "ts", "day"), m.keyNames(), "the columns by name, the partition column too");
    assertTrue(m.top().get(0).keys().get(1).matches("2026-03-\\d\\dT\\d\\d:\\d\\d:00Z"), m.top().get(0).keys().toString());
    assertTrue(Fact.find(m.limits(), "Q rule").startsWith("jackson-mudholkar, h0 = 0.21"));
  }

  @Test
  void rowSeriesCaptionSaysEachPointIsARow() {
    MonitoringModel m = ReportModel.of(FLEET.fitWithMonitor()).monitoring();
    assertFalse(m.buckets());
    assertEquals("Each point is one of the 800 scored rows, with its own value against the row limit: a limit that "
        + "holds puts about 1.0% of the points above it.", m.caption());
  }

  @Test
  void rowOrderIsNotMistakenForTime() {
    assertFalse(MonitoringModel.isTime("row", new double[] {2e8, 3e8}));
    assertFalse(MonitoringModel.isTime("ts", new double[] {0, 1, 2}));
    assertTrue(MonitoringModel.isTime("ts", new double[] {1.7e9, 1.8e9}));
  }

  @Test
  void clustersShowSelectionSizesAndProfiles() {
    RunResult run = FLEET.withClusters();
    ClusterResult c = run.clusters();
    ClusterModel m = ReportModel.of(run).clusters();
    assertEquals(3, m.k());
    assertTrue(m.hasCurves());
    assertEquals(List.of(3), m.selection().stream().filter(ClusterModel.Selection::chosen)
        .map(ClusterModel.Selection::k).toList());
    assertEquals(List.of("2", "14,350", "0.33", "402", "1.12", "10 / 50", "14,350 / 14,640 / 18,660"),
        m.selection().get(0).texts());
    // the chosen k's restarts: FleetFixture's 60 on the driver, 10 at the best
    assertTrue(m.facts().stream().anyMatch(f -> f.toString().contains("60 restarts on the driver, 10 reached")),
        m.facts().toString());
    for (int i = 0; i < c.sizes().length; i++) {
      assertEquals(c.sizes()[i], m.sizes().get(i).size());
      assertEquals(Fmt.percent(c.profiles().get(i).share(), 1), m.sizes().get(i).shareText());
    }
    ClusterModel.Shift top = m.profiles().get(0).shifts().get(0);
    ClusterResult.FeatureShift record = c.profiles().get(0).distinguishing().get(0);
    assertEquals(record.feature(), top.feature());
    assertEquals(Fmt.num(record.clusterMean()), top.clusterMean());
    assertEquals(ClusterModel.FEATURES_PER_PROFILE, m.profiles().get(0).shifts().size());
    long clustered = java.util.Arrays.stream(c.sizes()).sum();
    assertEquals("k-means++ restarts on the driver over all " + Fmt.count(clustered) + " rows, each refined by"
        + " Lloyd iterations and single-point moves (Hartigan-Wong); the best confirmed by Lloyd passes over all of"
        + " them", ClusterModel.startingCentroids(c), "the fixture's restarts ran on the driver");
    List<ClusterResult.KScore> parallel = c.selection().stream().map(s -> new ClusterResult.KScore(s.k(), s.wcss(),
        s.silhouette(), s.calinskiHarabasz(), s.daviesBouldin(), new ClusterResult.Restarts(3, 1, s.wcss(),
        s.wcss(), s.wcss(), false))).toList();
    ClusterResult all = new ClusterResult(c.space(), c.entity(), c.k(), c.selectionRule(), c.wcss(),
        c.silhouette(), c.sizes(), parallel, c.dimensions(), c.centroids(), c.features(), c.centroidsOriginal(),
        c.profiles(), c.silhouetteSample(), c.initSample());
    assertEquals("k-means|| on all " + Fmt.count(clustered) + " rows, then Lloyd iterations over all of them",
        ClusterModel.startingCentroids(all), "a sample of at least every row is every row");
    ClusterResult sampled = new ClusterResult(c.space(), c.entity(), c.k(), c.selectionRule(), c.wcss(),
        c.silhouette(), c.sizes(), parallel, c.dimensions(), c.centroids(), c.features(), c.centroidsOriginal(),
        c.profiles(), c.silhouetteSample(), 40);
    assertEquals("k-means|| on a seeded sample of 40 of the " + Fmt.count(clustered) + " rows, then Lloyd iterations"
        + " over all of them", ClusterModel.startingCentroids(sampled));
  }

  @Test
  void compressionListsEveryFeatureLeastKeptFirst() {
    RunResult run = FLEET.withReconstruction();
    CompressionModel m = ReportModel.of(run).compression();
    assertEquals(run.reconstruction().features().size(), m.features().size());
    for (int i = 1; i < m.features().size(); i++) {
      assertTrue(m.features().get(i).varianceKept() >= m.features().get(i - 1).varianceKept());
    }
    ReconstructionResult.FeatureError worst = run.reconstruction().features().stream()
        .min((a, b) -> Double.compare(a.varianceKept(), b.varianceKept())).orElseThrow();
    assertEquals(worst.feature(), m.features().get(0).name());
    assertEquals(Fmt.num(worst.rmse()), m.features().get(0).rmse());
    assertEquals(Fmt.num(worst.maxAbsError()), m.features().get(0).maxAbsError());
  }

  @Test
  void driftShowsAnglesAndTheLargestShiftsFirst() {
    RunResult run = FLEET.withDrift();
    DriftModel m = ReportModel.of(run).drift();
    assertEquals(run.drift().principalAnglesDegrees().length, m.angleTexts().size());
    assertEquals(Fmt.fixed(run.drift().principalAnglesDegrees()[0], 1) + "°", m.angleTexts().get(0));
    assertEquals("inlet_temp_°C", m.shifts().get(0).feature());
    assertEquals("+1.9", m.shifts().get(0).shiftText());
    assertEquals("-0.8", m.shifts().get(2).shiftText());
    assertEquals(DriftModel.SHIFTS, m.shifts().size());
    assertEquals(FLEET.d, m.shiftsTotal());
  }

  @Test
  void theModelIsPureAndRepeatable() {
    RunResult run = FLEET.full();
    ReportModel a = ReportModel.of(run);
    ReportModel b = ReportModel.of(run);
    assertEquals(a.sectionIds(), b.sectionIds());
    assertEquals(a.header(), b.header());
    assertNotNull(a.monitoring());
  }
}
