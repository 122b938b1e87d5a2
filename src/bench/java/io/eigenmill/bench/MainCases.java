package io.eigenmill.bench;

import io.eigenmill.bench.MainResult.CaseResult;
import io.eigenmill.bench.MainResult.KMeansQuality;
import io.eigenmill.bench.MainResult.MethodAccuracy;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.TableLoader;
import io.eigenmill.kmeans.ClusterJob;
import io.eigenmill.kmeans.ClusterOutcome;
import io.eigenmill.monitor.math.PrincipalAngles;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.JobSettings;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.EnumMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import java.util.function.Consumer;
import java.util.function.Function;
import org.apache.spark.ml.clustering.KMeans;
import org.apache.spark.ml.clustering.KMeansModel;
import org.apache.spark.ml.feature.PCA;
import org.apache.spark.ml.feature.PCAModel;
import org.apache.spark.ml.feature.VectorAssembler;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/**
 * Runs the main cases on one table and gathers times, accuracy and k-means quality. Shared preparation runs once,
 * untimed, before the first case that needs it: a covariance fit for the model (reused from the fit-covariance case
 * when that ran), the model written for apply, the scores table (the apply-pass case's output, or one scoring pass),
 * and the scores table read and cached (in 2 x cores partitions) for both k-means. The two sides of the read-floor
 * and k-means target ratios time their repetitions in turn ({@link #PAIRS}).
 */
final class MainCases {
  /** Explained-variance ratios reported per method. */
  static final int LEADING = 3;
  private static final String VECTOR = "bench_features";

  private final SparkSession spark;
  private final BenchTable table;
  private final List<String> columnsSetting;
  private final Path work;
  private final int warmups;
  private final int reps;
  private final Map<BenchCase, Timing> times = new EnumMap<>(BenchCase.class);
  private final List<CaseResult> results = new ArrayList<>();
  private final Map<String, FitResult> fits = new LinkedHashMap<>();
  private double[] builtinRatios;
  private PcaModel model;
  private String modelPath;
  private String scoresPath;
  private Dataset<Row> cachedScores;
  private KMeansQuality kmeans;

  /**
   * @param allNumeric true when the table's features are all its numeric non-key columns (the fits then leave
   *     features.columns empty, as a user would), false to list them explicitly
   */
  MainCases(SparkSession spark, BenchTable table, boolean allNumeric, Path work, int warmups, int reps) {
    this.spark = spark;
    this.table = table;
    this.columnsSetting = allNumeric ? List.of() : table.features();
    this.work = work;
    this.warmups = warmups;
    this.reps = reps;
  }

  MainResult run(List<BenchCase> cases) {
    try {
      for (int i = 0; i < cases.size(); i++) {
        BenchCase c = cases.get(i);
        BenchCase next = i + 1 < cases.size() ? cases.get(i + 1) : null;
        if (next != null && PAIRS.get(c) == next) {
          // a ratio's two sides, their timed repetitions alternated: a slow spell of a shared machine then falls
          // on both sides instead of on one
          timeAll(List.of(prepare(c), prepare(next)));
          i++;
        } else {
          timeAll(List.of(prepare(c)));
        }
      }
    } finally {
      if (cachedScores != null) {
        cachedScores.unpersist(true);
      }
    }
    FitResult randomized = fits.get("randomized");
    List<Ratio> ratios = Ratios.of(times, randomized == null ? 0 : randomized.passes(), kmeans);
    return new MainResult(table, List.copyOf(results), accuracy(), kmeans, ratios);
  }

  /** Cases whose repetitions alternate with those of the case that follows them (both sides of a target ratio). */
  static final Map<BenchCase, BenchCase> PAIRS = Map.of(BenchCase.READ_FLOOR, BenchCase.FIT_COVARIANCE,
      BenchCase.KMEANS, BenchCase.BUILTIN_KMEANS);

  /** A case ready to time: its body, the notes from its last result, and what to keep of that result. */
  private record Prepared<T>(BenchCase c, Callable<T> body, Function<T, String> notes, Consumer<T> keep) {
    Prepared<T> keeping(Consumer<T> k) {
      return new Prepared<>(c, body, notes, k);
    }
  }

  private static <T> Prepared<T> timed(BenchCase c, Callable<T> body, Function<T, String> notes) {
    return new Prepared<>(c, body, notes, x -> { });
  }

  /** Prepares case {@code c} (untimed set-up such as the model or the cached scores happens here). */
  private Prepared<?> prepare(BenchCase c) {
    return switch (c) {
      case SQL_SUM -> timed(c, () -> Floors.sqlSum(load(), table.features()), s -> "");
      case READ_FLOOR -> timed(c, () -> Floors.readFloor(load(), table.features()),
          s -> String.format(Locale.ROOT, "%,d rows", (long) s[s.length - 1]));
      case FIT_COVARIANCE -> fit(c, "covariance");
      case FIT_TSQR -> fit(c, "tsqr");
      case FIT_RANDOMIZED -> fit(c, "randomized");
      case BUILTIN_PCA -> builtinPca();
      case WRITE_FLOOR -> timed(c, () -> {
        Floors.writeFloor(load(), table.keys(), BenchTables.PARTITION_COLUMN, BenchJobs.COMPONENTS,
            work.resolve("write-floor").toString());
        return 0;
      }, x -> "");
      case APPLY_PASS -> applyPass();
      case APPLY -> apply();
      case KMEANS -> ourKMeans();
      case BUILTIN_KMEANS -> builtinKMeans();
    };
  }

  /** Times the cases together (warm-ups first, then each repetition of every case in turn) and keeps results. */
  private void timeAll(List<Prepared<?>> group) {
    List<Timer.Case<?>> cases = new ArrayList<>();
    for (Prepared<?> p : group) {
      cases.add(new Timer.Case<>(p.c().word(), p.body()));
    }
    List<Timer.Timed<?>> timed = Timer.runInTurn(spark.sparkContext(), warmups, reps, cases);
    for (int i = 0; i < group.size(); i++) {
      keep(group.get(i), timed.get(i));
    }
  }

  @SuppressWarnings("unchecked")
  private <T> void keep(Prepared<T> p, Timer.Timed<?> t) {
    T last = (T) t.last();
    times.put(p.c(), t.timing());
    results.add(new CaseResult(p.c(), t.timing(), p.notes().apply(last)));
    p.keep().accept(last);
  }

  private Dataset<Row> load() {
    return spark.read().parquet(table.path());
  }

  private Prepared<FitResult> fit(BenchCase c, String method) {
    JobSettings settings = BenchJobs.fit(table, columnsSetting, method, work.resolve("fit-output").toString());
    JobPlan plan = Planner.plan(spark, settings);
    if (plan.d() != table.d()) {
      throw new IllegalStateException("the planner resolved " + plan.d() + " features, the table has " + table.d());
    }
    return timed(c, () -> new FitJob(spark, plan).execute(TableLoader.load(spark, settings.input())),
        (FitResult f) -> f.passes() + (f.passes() == 1 ? " pass, " : " passes, ") + (f.columnarRead()
            ? "columnar batches (column copy " + io.eigenmill.math.ShiftedCopy.best().describe() + ")"
            : "Row path") + ", k = " + f.model().k() + ", " + f.blas() + " ("
            + stages(f.timings()) + ")" + accuracyNote(f)).keeping(r -> fits.put(method, r));
  }

  /** The randomized fit's own accuracy: its bound against the tolerance and the passes the tolerance added. */
  private static String accuracyNote(FitResult f) {
    var a = f.randomizedAccuracy();
    if (a == null) {
      return "";
    }
    return String.format(Locale.ROOT, "; accuracy bound %.2e (tolerance %s, %s) after %d power iterations, %d"
        + " added for the tolerance; bound by pass %s", a.figures().bound(), Double.toString(a.tolerance()),
        a.targetMet() ? "met" : "not met", a.powerIterationsRun(), a.extraPasses(),
        Arrays.stream(a.boundByPass()).mapToObj(x -> String.format(Locale.ROOT, "%.1e", x)).toList());
  }

  private Prepared<PCAModel> builtinPca() {
    return timed(BenchCase.BUILTIN_PCA, () -> withoutStageCodegen(() -> enginePca(load(), table.features())),
        (PCAModel x) -> "unscaled features (the engine's PCA only centres); whole-stage code generation off")
        .keeping(m -> {
          double[] explained = m.explainedVariance().toArray();
          builtinRatios = Arrays.copyOf(explained, Math.min(LEADING, explained.length));
        });
  }

  /** Spark's whole-stage code generation, turned off for the engine's PCA (see {@link #withoutStageCodegen}). */
  static final String STAGE_CODEGEN = "spark.sql.codegen.wholeStage";

  /**
   * Runs {@code body} with whole-stage code generation off for the session, then restores the setting. The engine's
   * PCA is timed at its faster setting: with the code generated for the stage that assembles its vectors from 100
   * columns it spent most of its task time in that code, and a whole process took 68 s against 38 s with it off
   * (`local-demo/bench --process`, 2026-12-04), so a ratio against Spark's default would flatter ours.
   */
  private <T> T withoutStageCodegen(java.util.function.Supplier<T> body) {
    String before = spark.conf().get(STAGE_CODEGEN, "true");
    spark.conf().set(STAGE_CODEGEN, "false");
    try {
      return body.get();
    } finally {
      spark.conf().set(STAGE_CODEGEN, before);
    }
  }

  /**
   * The engine's PCA as the builtin-pca case runs it: {@code VectorAssembler} over {@code features}, rows with a
   * missing value skipped, then {@code ml.feature.PCA(k = 10).fit} (the whole-process case runs the same).
   */
  static PCAModel enginePca(Dataset<Row> table, List<String> features) {
    Dataset<Row> vectors = new VectorAssembler().setInputCols(features.toArray(new String[0]))
        .setOutputCol(VECTOR).setHandleInvalid("skip").transform(table);
    return new PCA().setInputCol(VECTOR).setOutputCol("bench_pca").setK(BenchJobs.COMPONENTS).fit(vectors);
  }

  private Prepared<Long> applyPass() {
    ensureModel();
    String path = work.resolve("scores").toString();
    return timed(BenchCase.APPLY_PASS, () -> Scores.write(spark, load(), table.keys(), model, applySettings(), path),
        (Long n) -> String.format(Locale.ROOT, "%,d rows scored", n)).keeping(n -> scoresPath = path);
  }

  private Prepared<RunResult> apply() {
    ensureModel();
    JobSettings settings = applySettings();
    return timed(BenchCase.APPLY, () -> JobRunner.run(spark, settings), (RunResult r) -> String.format(Locale.ROOT,
        "%,d rows scored, %d rows flagged by T2", r.monitor().rowsScored(), r.monitor().flaggedT2()));
  }

  private JobSettings applySettings() {
    return BenchJobs.apply(table, modelPath, work.resolve("apply-output").toString());
  }

  private Prepared<ClusterOutcome> ourKMeans() {
    ensureCachedScores();
    JobSettings.Cluster settings = BenchJobs.cluster(table, work.resolve("kmeans-output").toString());
    return timed(BenchCase.KMEANS, () -> new ClusterJob(spark, settings, cachedScores, List.of(),
        Scores.columns(model.k()), model, ClusterSpace.SCORES).execute(), (ClusterOutcome x) -> x.passes()
        + " passes over the cached points, nearest-centroid kernel " + io.eigenmill.kmeans.math.NearestKeys.best()
        .describe() + " (" + stages(x.timings()) + ")").keeping(o -> {
          KMeansQuality before = kmeans;
          kmeans = new KMeansQuality(o.result().wcss(), before == null ? Double.NaN : before.builtin(),
              o.passes(), before == null ? 0 : before.builtinIterations());
        });
  }

  /** "summary 0.52 s, k-means 2.9 s, ..." from a job's seconds per stage. */
  private static String stages(java.util.Map<String, Double> seconds) {
    List<String> parts = new java.util.ArrayList<>();
    seconds.forEach((stage, s) -> parts.add(stage + " " + String.format(java.util.Locale.ROOT, "%.2f s", s)));
    return String.join(", ", parts);
  }

  private Prepared<KMeansModel> builtinKMeans() {
    ensureCachedScores();
    return timed(BenchCase.BUILTIN_KMEANS, () -> {
      Dataset<Row> vectors = new VectorAssembler().setInputCols(Scores.columns(model.k()).toArray(new String[0]))
          .setOutputCol(VECTOR).transform(cachedScores);
      return new KMeans().setK(BenchJobs.CLUSTERS).setMaxIter(BenchJobs.CLUSTER_ITERATIONS)
          .setSeed(BenchJobs.CLUSTER_SEED).setFeaturesCol(VECTOR).fit(vectors);
    }, (KMeansModel x) -> x.summary().numIter() + " iterations").keeping(m -> {
      KMeansQuality before = kmeans;
      kmeans = new KMeansQuality(before == null ? Double.NaN : before.ours(), m.summary().trainingCost(),
          before == null ? 0 : before.ourPasses(), m.summary().numIter());
    });
  }

  private void ensureModel() {
    if (model != null) {
      return;
    }
    FitResult cov = fits.get("covariance");
    if (cov == null) {
      System.out.println("bench: preparing the model: one covariance fit (untimed)");
      JobSettings settings = BenchJobs.fit(table, columnsSetting, "covariance", work.resolve("fit-output")
          .toString());
      cov = new FitJob(spark, Planner.plan(spark, settings)).execute(TableLoader.load(spark, settings.input()));
    }
    model = cov.model();
    Path path = work.resolve("model");
    BenchTables.deleteTree(path);
    ModelStore.write(spark, model, path.toString());
    modelPath = path.toString();
  }

  private void ensureCachedScores() {
    if (cachedScores != null) {
      return;
    }
    ensureModel();
    if (scoresPath == null) {
      System.out.println("bench: preparing the scores table: one scoring pass (untimed)");
      scoresPath = work.resolve("scores").toString();
      Scores.write(spark, load(), table.keys(), model, applySettings(), scoresPath);
    }
    Dataset<Row> scores = spark.read().parquet(scoresPath);
    // cached in 2 x cores partitions (round-robin, untimed): the scores files alone split into 3 partitions on
    // 2 cores, a stage whose last task runs alone; both k-means read this same cached table
    int partitions = 2 * spark.sparkContext().defaultParallelism();
    cachedScores = scores.select(Scores.columns(model.k()).stream().map(scores::col)
        .toArray(org.apache.spark.sql.Column[]::new)).repartition(partitions).cache();
    long n = cachedScores.count();
    System.out.printf(Locale.ROOT, "bench: cached the scores table (%,d rows in %d partitions, untimed)%n", n,
        partitions);
  }

  private List<MethodAccuracy> accuracy() {
    List<MethodAccuracy> out = new ArrayList<>();
    FitResult cov = fits.get("covariance");
    for (Map.Entry<String, FitResult> e : fits.entrySet()) {
      FitResult f = e.getValue();
      double[] ratios = f.spectrum().varianceShares();
      boolean compared = !e.getKey().equals("covariance") && cov != null;
      double[] ev = f.spectrum().eigenvalues();
      int k = f.model().k();
      out.add(new MethodAccuracy(e.getKey(), Arrays.copyOf(ratios, Math.min(LEADING, ratios.length)),
          compared ? largestAngle(cov.model(), f.model(), k) : Double.NaN,
          compared ? largestAngle(cov.model(), f.model(), Math.min(LEADING, k)) : Double.NaN,
          ev.length > k ? ev[k - 1] / ev[k] : Double.NaN, true));
    }
    if (builtinRatios != null) {
      out.add(new MethodAccuracy("builtin-pca", builtinRatios, Double.NaN, Double.NaN, Double.NaN, false));
    }
    return out;
  }

  /**
   * The largest principal angle between the subspaces of the first {@code m} loadings of two models of the same
   * features; NaN when they are not comparable.
   */
  static double largestAngle(PcaModel a, PcaModel b, int m) {
    if (!a.features().equals(b.features()) || m < 1 || m > Math.min(a.k(), b.k())) {
      return Double.NaN;
    }
    // loadings are column-major d x k: the first m columns are the first m * d values
    double[] angles = PrincipalAngles.between(Arrays.copyOf(a.loadings(), m * a.d()), m,
        Arrays.copyOf(b.loadings(), m * b.d()), m, a.d());
    return angles[angles.length - 1];
  }
}
