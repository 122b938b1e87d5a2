package io.eigenmill.testing;

import io.eigenmill.io.PcaModel;
import io.eigenmill.kmeans.ClusterResult;
import io.eigenmill.monitor.DriftResult;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.monitor.ReconstructionResult;
import io.eigenmill.monitor.ScoreSample;
import io.eigenmill.pca.FitResult;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.MemoryEstimate;
import io.eigenmill.record.RunResult;
import io.eigenmill.report.Fmt;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.apache.commons.math3.distribution.FDistribution;

/**
 * Result records of a realistic run over an edge cache fleet, built by hand for the report tests: a seeded table of
 * 800 five-minute samples from 40 hosts in three groups (busy, storage-heavy, hot aisle), driven by traffic, disk and
 * heat, plus two rows with a failing fan. The spectrum is a real eigen-decomposition of the table's correlation
 * matrix, so every record agrees with the others.
 */
public final class FleetFixture {
  public static final String[] FEATURES = {"cpu_user_pct", "cpu_system_pct", "cpu_iowait_pct", "load_1m", "mem_used_gb",
      "mem_page_cache_gb", "swap_used_mb", "disk_read_mbps", "disk_write_mbps", "disk_util_pct", "net_rx_gbps",
      "net_tx_gbps", "tcp_connections", "cache_hit_ratio", "cpu_temp_c", "inlet_temp_°C", "fan_rpm", "power_w"};
  /** mean, sd, weight on traffic, disk, heat, noise. */
  private static final double[][] SPEC = {
      {35, 12, .9, .2, .1, .3}, {9, 3, .8, .3, 0, .4}, {2.5, 1.2, .1, .9, 0, .4}, {6, 2.5, .85, .35, 0, .3},
      {88, 10, .6, .2, 0, .6}, {140, 20, -.3, .7, 0, .5}, {40, 30, .1, .3, 0, .9}, {320, 120, .3, .9, 0, .3},
      {110, 45, .1, .95, 0, .3}, {45, 15, .2, .9, .1, .3}, {4.2, 1.5, .95, 0, 0, .25}, {18, 6, .97, .1, 0, .2},
      {52000, 15000, .9, 0, 0, .35}, {.93, .03, .2, -.8, 0, .5}, {62, 7, .5, .1, .8, .3}, {24, 3, 0, 0, .95, .3},
      {9500, 1800, .3, 0, .9, .35}, {420, 60, .7, .3, .5, .25}};
  private static final double[][] GROUP_SHIFT = {{1.2, -.3, .2}, {-.6, 1.3, -.4}, {0, -.2, 1.6}};
  public static final int N = 800;
  public static final long START = 1_772_323_200L;

  public final int d = FEATURES.length;
  public final double[][] x = new double[N][d];
  public final int[] group = new int[N];
  public final String[] host = new String[N];
  public final double[] means = new double[d];
  public final double[] sds = new double[d];
  public final Spectrum spectrum;
  public final int k;
  public final PcaModel model;
  public final double[][] scores;
  public final double[] t2 = new double[N];
  public final double[] q = new double[N];
  public final double[][] residual;

  public FleetFixture() {
    Random r = new Random(20260301);
    for (int i = 0; i < N; i++) {
      int h = i % 40;
      host[i] = String.format("edge-%02d", h);
      group[i] = h % 3;
      double hour = (i * 300.0 / 3600) % 24;
      double[] latent = {r.nextGaussian() + GROUP_SHIFT[group[i]][0] + 0.8 * Math.sin(2 * Math.PI * hour / 24),
          r.nextGaussian() + GROUP_SHIFT[group[i]][1], r.nextGaussian() + GROUP_SHIFT[group[i]][2]};
      for (int j = 0; j < d; j++) {
        double[] s = SPEC[j];
        double z = s[2] * latent[0] + s[3] * latent[1] + s[4] * latent[2] + s[5] * r.nextGaussian();
        x[i][j] = s[0] + s[1] * z * 0.6;
      }
    }
    for (int i : new int[] {233, 611}) {
      x[i][16] = 2100;
      x[i][14] = 91;
    }
    for (int j = 0; j < d; j++) {
      double m = 0;
      for (int i = 0; i < N; i++) {
        m += x[i][j];
      }
      means[j] = m / N;
      double v = 0;
      for (int i = 0; i < N; i++) {
        v += (x[i][j] - means[j]) * (x[i][j] - means[j]);
      }
      sds[j] = Math.sqrt(v / (N - 1));
    }
    double[] c = new double[d * d];
    for (int a = 0; a < d; a++) {
      for (int b = 0; b < d; b++) {
        double s = 0;
        for (int i = 0; i < N; i++) {
          s += z(i, a) * z(i, b);
        }
        c[a + b * d] = s / (N - 1);
      }
    }
    spectrum = Spectrum.ofCovariance(c, d);
    k = spectrum.smallestReaching(0.9);
    double[] loadings = Arrays.copyOf(spectrum.loadings(), d * k);
    List<String> types = new ArrayList<>();
    for (int j = 0; j < d; j++) {
      types.add(j == 12 ? "bigint" : "double");
    }
    model = new PcaModel(PcaModel.FORMAT_VERSION, "0.1.0", List.of(FEATURES), types, "standardize", Method.COVARIANCE, N,
        means.clone(), sds.clone(), k, loadings, spectrum.eigenvalues(), true, spectrum.totalVariance(),
        PcaModel.fingerprint(List.of(FEATURES), types), sds.clone());
    scores = new double[N][k];
    residual = new double[N][d];
    for (int i = 0; i < N; i++) {
      for (int cc = 0; cc < k; cc++) {
        for (int j = 0; j < d; j++) {
          scores[i][cc] += z(i, j) * spectrum.loading(j, cc);
        }
        t2[i] += scores[i][cc] * scores[i][cc] / spectrum.eigenvalues()[cc];
      }
      for (int j = 0; j < d; j++) {
        double fit = 0;
        for (int cc = 0; cc < k; cc++) {
          fit += scores[i][cc] * spectrum.loading(j, cc);
        }
        residual[i][j] = z(i, j) - fit;
        q[i] += residual[i][j] * residual[i][j];
      }
    }
  }

  public double z(int i, int j) {
    return (x[i][j] - means[j]) / sds[j];
  }

  public static JobSettings settings(String extra) {
    String hocon = "name = \"edge-cache-fleet\"\ninput.path = \"/data/edge-fleet/metrics/2026-03\"\n"
        + "output.path = \"/data/edge-fleet/pca/2026-03\"\nfeatures.keys = [\"host\", \"ts\"]\n"
        + "prepare.scaling = standardize\n" + extra;
    return new SettingsReader().readString(hocon, List.of(), "edge-fleet.conf");
  }

  public JobPlan plan(JobSettings s, String kind) {
    List<String> features = new ArrayList<>(List.of(FEATURES));
    features.add("psu_count");
    List<String> types = new ArrayList<>(model.featureTypes());
    types.add("int");
    return new JobPlan(s, kind, features, types, List.of("host", "ts"), List.of("day"), 812, 3_400_000L,
        io.eigenmill.settings.Choices.Method.COVARIANCE, "auto: d = 19 <= reduce.covariance-max-features (4000) and "
            + "the d x d Gram fits in memory: one pass, exact",
        new MemoryEstimate(11_552, 158_536, 1L << 30, 256L << 20, "d x d Gram, 2.8 KiB"),
        List.of("model", "scores", "summary.json", "report.html"),
        List.of("features.columns: '*' matched site (string), which is not numeric: skipped"));
  }

  public FitResult fit(JobPlan plan) {
    long[] missing = new long[plan.d()];
    missing[7] = 7;
    missing[16] = 5;
    Map<String, Double> timings = timings();
    return new FitResult(plan, model, spectrum, List.of("psu_count"), 812, 12, 0, missing, true, 1,
        "smallest k with cumulative explained variance >= 0.9", "BLAS JNIBLAS (native), LAPACK JNILAPACK (native)",
        timings, warnings());
  }

  public static Map<String, Double> timings() {
    Map<String, Double> t = new LinkedHashMap<>();
    t.put("plan", 0.84);
    t.put("moments", 41.7);
    t.put("covariance", 0.012);
    t.put("model", 0.21);
    t.put("outputs", 12.9);
    return t;
  }

  public static List<String> warnings() {
    return List.of("12 of 812 rows dropped for missing values (disk_read_mbps: 7 cells, fan_rpm: 5 cells); set "
        + "prepare.missing = impute-mean to keep them", "constant columns dropped: psu_count (they carry no "
        + "variance; exclude them with features.exclude to silence this)");
  }

  public MonitorResult monitor() {
    double t2Limit = k * (N - 1.0) * (N + 1.0) / (N * (double) (N - k))
        * new FDistribution(k, N - k).inverseCumulativeProbability(0.99);
    double[] sorted = q.clone();
    Arrays.sort(sorted);
    double qLimit = sorted[(int) (0.99 * N)];
    long ft2 = 0;
    long fq = 0;
    long both = 0;
    for (int i = 0; i < N; i++) {
      ft2 += t2[i] > t2Limit ? 1 : 0;
      fq += q[i] > qLimit ? 1 : 0;
      both += t2[i] > t2Limit && q[i] > qLimit ? 1 : 0;
    }
    double[] pos = new double[N];
    for (int i = 0; i < N; i++) {
      pos[i] = START + i * 300.0;
    }
    Integer[] order = new Integer[N];
    for (int i = 0; i < N; i++) {
      order[i] = i;
    }
    Arrays.sort(order, Comparator.comparingDouble(i -> -Math.max(t2[i] / t2Limit, q[i] / qLimit)));
    List<MonitorResult.FlaggedRow> top = new ArrayList<>();
    for (int n = 0; n < 10; n++) {
      int i = order[n];
      List<MonitorResult.Contribution> cs = new ArrayList<>();
      for (int j = 0; j < d; j++) {
        cs.add(new MonitorResult.Contribution(FEATURES[j], residual[i][j] * residual[i][j]));
      }
      top.add(new MonitorResult.FlaggedRow(List.of(host[i], Fmt.time(pos[i], false)), t2[i], q[i], t2[i] > t2Limit,
          q[i] > qLimit, cs));
    }
    return new MonitorResult(0.99, k, N, ft2, fq, both, t2Limit, "F distribution (new rows), k = " + k + ", n = " + N,
        qLimit, "Jackson and Mudholkar (1979), all discarded eigenvalues", "jackson-mudholkar", 0.21, false,
        MonitorResult.Series.ofRows("ts", pos, t2.clone(), q.clone()), List.of("host", "ts"), top, List.of());
  }

  /** Seconds per bucket of {@link #monitorBuckets}: an hour, 12 of the fixture's five-minute rows. */
  public static final long BUCKET = 3600;

  /**
   * {@link #monitor()} as the scoring pass records it on a table partitioned by {@code day}: the series per hour
   * (counted here from the rows and the limits) and the top rows keyed by host, ts and the partition column day,
   * their times as ISO-8601 text.
   */
  public MonitorResult monitorBuckets() {
    return monitorBuckets(-1);
  }

  /** {@link #monitorBuckets()} with every row of bucket {@code burst} (if >= 0) above the Q limit: a bad hour. */
  public MonitorResult monitorBuckets(int burst) {
    MonitorResult m = monitor();
    int buckets = (int) ((N - 1) * 300L / BUCKET) + 1;
    double[] at = new double[buckets];
    double[] maxT2 = new double[buckets];
    double[] maxQ = new double[buckets];
    long[] rows = new long[buckets];
    long[] overT2 = new long[buckets];
    long[] overQ = new long[buckets];
    for (int i = 0; i < N; i++) {
      int b = (int) (i * 300L / BUCKET);
      at[b] = START + b * BUCKET;
      maxT2[b] = Math.max(maxT2[b], t2[i]);
      maxQ[b] = Math.max(maxQ[b], q[i]);
      rows[b]++;
      overT2[b] += t2[i] > m.t2Limit() ? 1 : 0;
      overQ[b] += q[i] > m.qLimit() ? 1 : 0;
    }
    long extra = 0;
    if (burst >= 0) {
      extra = rows[burst] - overQ[burst];
      overQ[burst] = rows[burst];
    }
    List<MonitorResult.FlaggedRow> top = new ArrayList<>();
    for (MonitorResult.FlaggedRow r : m.top()) {
      String ts = java.time.LocalDateTime.parse(r.keys().get(1).replace(' ', 'T')).toInstant(java.time.ZoneOffset.UTC)
          .toString();
      top.add(new MonitorResult.FlaggedRow(List.of(r.keys().get(0), ts, ts.substring(0, 10)), r.t2(), r.q(),
          r.flaggedT2(), r.flaggedQ(), r.qContributions()));
    }
    return new MonitorResult(m.confidence(), m.k(), m.rowsScored(), m.flaggedT2(), m.flaggedQ() + extra,
        m.flaggedBoth(),
        m.t2Limit(), m.t2LimitRule(), m.qLimit(), m.qLimitRule(), m.qRule(), m.qH0(), false,
        new MonitorResult.Series("ts (buckets of 3600 s, 1.00 hours)", at, maxT2, maxQ, rows, overT2, overQ),
        List.of("host", "ts", "day"), top, List.of());
  }

  public ScoreSample sample(boolean clustered) {
    List<List<String>> keys = new ArrayList<>();
    double[][] s = new double[N][];
    for (int i = 0; i < N; i++) {
      keys.add(List.of(host[i], Long.toString(START + i * 300L)));
      s[i] = Arrays.copyOf(scores[i], Math.min(3, k));
    }
    return new ScoreSample(List.of("host", "ts"), keys, s, clustered ? group.clone() : null);
  }

  public ClusterResult clusters() {
    long[] sizes = new long[3];
    double[][] centroids = new double[3][k];
    double[][] original = new double[3][d];
    for (int i = 0; i < N; i++) {
      sizes[group[i]]++;
      for (int c = 0; c < k; c++) {
        centroids[group[i]][c] += scores[i][c];
      }
      for (int j = 0; j < d; j++) {
        original[group[i]][j] += x[i][j];
      }
    }
    double within = 0;
    for (int g = 0; g < 3; g++) {
      for (int c = 0; c < k; c++) {
        centroids[g][c] /= sizes[g];
      }
      for (int j = 0; j < d; j++) {
        original[g][j] /= sizes[g];
      }
    }
    for (int i = 0; i < N; i++) {
      for (int c = 0; c < k; c++) {
        within += Math.pow(scores[i][c] - centroids[group[i]][c], 2);
      }
    }
    List<ClusterResult.Profile> profiles = new ArrayList<>();
    for (int g = 0; g < 3; g++) {
      List<ClusterResult.FeatureShift> shifts = new ArrayList<>();
      for (int j = 0; j < d; j++) {
        shifts.add(new ClusterResult.FeatureShift(FEATURES[j], original[g][j], means[j],
            (original[g][j] - means[j]) / sds[j]));
      }
      shifts.sort(Comparator.comparingDouble(f -> -Math.abs(f.standardizedDifference())));
      profiles.add(new ClusterResult.Profile(g, sizes[g], sizes[g] / (double) N, shifts));
    }
    List<ClusterResult.KScore> selection = new ArrayList<>();
    double[] sil = {0.33, 0.41, 0.36, 0.31, 0.29, 0.27, 0.26};
    double[] ch = {402, 468, 431, 389, 352, 330, 311};
    double[] db = {1.12, 0.93, 1.04, 1.15, 1.21, 1.26, 1.31};
    for (int kk = 2; kk <= 8; kk++) {
      double wss = kk == 3 ? within : within * (kk < 3 ? 1.45 : 1 - 0.07 * (kk - 3));
      selection.add(new ClusterResult.KScore(kk, wss, sil[kk - 2], ch[kk - 2], db[kk - 2],
          new ClusterResult.Restarts(30 + 10 * kk, 10, wss, wss * (1 + 0.01 * kk), wss * 1.3, true)));
    }
    List<String> dims = new ArrayList<>();
    for (int c = 0; c < k; c++) {
      dims.add("PC" + (c + 1));
    }
    return new ClusterResult(ClusterSpace.SCORES, "", 3, "largest silhouette over k = 2..8", within, 0.41, sizes, selection,
        dims, centroids, List.of(FEATURES), original, profiles, N, N);
  }

  public ReconstructionResult reconstruction() {
    List<ReconstructionResult.FeatureError> out = new ArrayList<>();
    for (int j = 0; j < d; j++) {
      double ss = 0;
      double max = 0;
      for (int i = 0; i < N; i++) {
        double e = residual[i][j] * sds[j];
        ss += e * e;
        max = Math.max(max, Math.abs(e));
      }
      out.add(new ReconstructionResult.FeatureError(FEATURES[j], Math.sqrt(ss / N), max,
          1 - ss / (N - 1) / (sds[j] * sds[j])));
    }
    return new ReconstructionResult(k, N, out);
  }

  public DriftResult drift() {
    double[] angles = new double[k];
    double[] old = new double[k];
    double[] ratios = spectrum.varianceShares();
    for (int c = 0; c < k; c++) {
      angles[c] = 1.6 + 4.3 * c * c / (double) k;
      old[c] = ratios[c] * (c == 0 ? 0.93 : 1.04);
    }
    List<DriftResult.MeanShift> shifts = new ArrayList<>();
    for (int j = 0; j < d; j++) {
      double shift = j == 15 ? 1.9 : j == 16 ? 1.2 : j == 13 ? -0.8 : 0.05 * Math.sin(j);
      shifts.add(new DriftResult.MeanShift(FEATURES[j], means[j] - shift * sds[j], means[j], shift));
    }
    return new DriftResult("/data/edge-fleet/pca/2026-02/model", angles, old, Arrays.copyOf(ratios, k), shifts);
  }

  /** An apply run of any model, with nothing but the model: for edge cases (wide, one component, odd names). */
  public static RunResult applyRun(PcaModel m, List<String> warnings) {
    JobSettings s = settings("apply.model = \"/models/m\"\n");
    JobPlan plan = new JobPlan(s, "apply", m.features(), m.featureTypes(), List.of("host", "ts"), List.of(), -1, -1,
        io.eigenmill.settings.Choices.Method.COVARIANCE, "auto: test", null, List.of("scores"), List.of());
    return new RunResult(plan, null, m, null, null, null, null, null, "/out", Map.of("apply", 1.0), warnings, 1.0);
  }

  /** A model over {@code names} with k components, loadings from a seeded stream and the given eigenvalues. */
  public static PcaModel model(List<String> names, int k, double[] eigenvalues) {
    int d = names.size();
    Random r = new Random(11);
    double[] loadings = new double[d * k];
    for (int i = 0; i < loadings.length; i++) {
      loadings[i] = r.nextGaussian() / Math.sqrt(d);
    }
    List<String> types = java.util.Collections.nCopies(d, "double");
    double total = 0;
    for (double e : eigenvalues) {
      total += e;
    }
    return new PcaModel(PcaModel.FORMAT_VERSION, "0.1.0", names, types, "none", Method.COVARIANCE, 500, new double[d],
        new double[d], k, loadings, eigenvalues, eigenvalues.length == d, total, PcaModel.fingerprint(names, types),
        java.util.Collections.nCopies(d, 1.0).stream().mapToDouble(Double::doubleValue).toArray());
  }

  // --- whole runs ---

  public RunResult fitOnly() {
    JobPlan plan = plan(settings(""), "fit");
    FitResult fit = fit(plan);
    return new RunResult(plan, fit, model, null, null, null, null, null, "/data/edge-fleet/pca/2026-03",
        timings(), fit.warnings(), 55.8);
  }

  public RunResult fitWithMonitor() {
    JobPlan plan = plan(settings("output.scores = true\n"), "fit");
    FitResult fit = fit(plan);
    return new RunResult(plan, fit, model, monitor(), null, null, null, sample(false), "/data/edge-fleet/pca/2026-03",
        timings(), fit.warnings(), 71.2);
  }

  public RunResult applyWithMonitor() {
    JobPlan plan = plan(settings("apply.model = \"/data/edge-fleet/pca/2026-02/model\"\n"), "apply");
    return new RunResult(plan, null, model, monitor(), null, null, null, sample(false), "/data/edge-fleet/apply/03-02",
        timings(), List.of(), 33.0);
  }

  public RunResult applyWithBuckets() {
    return applyWithBuckets(-1);
  }

  /** An apply run with the hourly series of {@link #monitorBuckets(int)}. */
  public RunResult applyWithBuckets(int burst) {
    JobPlan plan = plan(settings("apply.model = \"/data/edge-fleet/pca/2026-02/model\"\n"), "apply");
    return new RunResult(plan, null, model, monitorBuckets(burst), null, null, null, sample(false),
        "/data/edge-fleet/apply/03-02", timings(), List.of(), 33.0);
  }

  public RunResult withClusters() {
    JobPlan plan = plan(settings("cluster.enabled = true\noutput.scores = true\n"), "fit");
    FitResult fit = fit(plan);
    return new RunResult(plan, fit, model, null, null, null, clusters(), sample(true), "/data/edge-fleet/pca/2026-03",
        timings(), fit.warnings(), 80.4);
  }

  public RunResult withReconstruction() {
    JobPlan plan = plan(settings("output.reconstruction = true\n"), "fit");
    FitResult fit = fit(plan);
    return new RunResult(plan, fit, model, null, reconstruction(), null, null, null, "/data/edge-fleet/pca/2026-03",
        timings(), fit.warnings(), 64.0);
  }

  public RunResult withDrift() {
    JobPlan plan = plan(settings("apply.model = \"/data/edge-fleet/pca/2026-03/model\"\n"
        + "apply.compare-with = \"/data/edge-fleet/pca/2026-02/model\"\n"), "apply");
    return new RunResult(plan, null, model, null, null, drift(), null, null, "/data/edge-fleet/apply/03-02",
        timings(), List.of(), 21.5);
  }

  /** A fit with every section: monitoring, clusters, reconstruction and drift. */
  public RunResult full() {
    JobPlan plan = plan(settings("cluster.enabled = true\noutput.scores = true\noutput.reconstruction = true\n"
        + "apply.compare-with = \"/data/edge-fleet/pca/2026-02/model\"\n"), "fit");
    FitResult fit = fit(plan);
    return new RunResult(plan, fit, model, monitor(), reconstruction(), drift(), clusters(), sample(true),
        "/data/edge-fleet/pca/2026-03", timings(), fit.warnings(), 97.3);
  }
}
