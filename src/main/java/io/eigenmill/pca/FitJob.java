package io.eigenmill.pca;

import io.eigenmill.Version;
import io.eigenmill.engine.FeatureInput;
import io.eigenmill.engine.OrderedMerge;
import io.eigenmill.engine.SummaryAggregator;
import io.eigenmill.io.Snapshot;
import io.eigenmill.io.SnapshotEntry;
import io.eigenmill.io.SnapshotKey;
import io.eigenmill.io.SnapshotStore;
import io.eigenmill.plan.SnapshotPlan;
import io.eigenmill.engine.PartialResult;
import io.eigenmill.engine.ReadCounts;
import io.eigenmill.engine.ReadMode;
import io.eigenmill.engine.Stopwatch;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.TableLoader;
import io.eigenmill.math.BlockBudget;
import io.eigenmill.math.BlockPrep;
import io.eigenmill.math.ColumnStats;
import io.eigenmill.math.Linalg;
import io.eigenmill.math.Moments;
import io.eigenmill.pca.math.RFactor;
import io.eigenmill.pca.math.RandomizedSubspace;
import io.eigenmill.pca.math.RitzAccuracy;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.KeptPasses;
import io.eigenmill.plan.MethodChoice;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.Choices.MissingPolicy;
import io.eigenmill.settings.Choices.Scaling;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.broadcast.Broadcast;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Fits a PCA model: the first pass (count, means, variances, and for the covariance method the full Gram; for TSQR
 * the R factor of the centred rows), then the randomized method's own passes, the decomposition on the driver, the
 * sign convention and the choice of k.
 *
 * <p>Passes: covariance 1, TSQR 1, randomized 2 + the power iterations run (power-iterations, plus those added to
 * reach reduce.randomized.tolerance, up to max-power-iterations); one more with impute-mean (the column means). Missing values follow
 * {@code prepare.missing}; constant columns are dropped with a warning; results do not depend on the partitioning
 * beyond rounding.
 */
public final class FitJob {
  private static final Logger LOG = LoggerFactory.getLogger(FitJob.class);

  private final SparkSession spark;
  private final JobPlan plan;

  public FitJob(SparkSession spark, JobPlan plan) {
    this.spark = spark;
    this.plan = plan;
  }

  public FitResult execute() {
    Dataset<Row> table = TableLoader.load(spark, plan.settings().input());
    return execute(table);
  }

  /**
   * Fits on {@code table} in named steps, in this order: open the input, the column means (impute-mean only), the
   * first pass, the row checks, the kept (non-constant) columns, the decomposition, the model. Timings keys: plan,
   * column-means, tsqr or moments, the method, model.
   */
  public FitResult execute(Dataset<Row> table) {
    if (plan.settings().input().fromSnapshots()) {
      return executeFromSnapshots();
    }
    Stopwatch clock = new Stopwatch();
    List<String> warnings = new ArrayList<>();
    FeatureInput input = open(table);
    keepIfMultiPass(input);
    clock.lap("plan");
    try {
      Imputation impute = imputation(input, clock);
      if (plan.groups() != null) {
        return grouped(input, impute, clock, warnings);
      }
      FirstPass first = firstPass(input, impute, clock);
      checkRows(first.counts(), first.used(), plan.settings().prepare().missing());
      return finish(input, impute, first, clock, warnings);
    } finally {
      input.release();
    }
  }

  /**
   * The randomized method reads the input 2 + power-iterations times (one more with impute-mean): the first pass
   * keeps the features in executor memory when they fit ({@link KeptPasses}), so the later passes scan memory.
   * The same decision as the plan's note.
   */
  private void keepIfMultiPass(FeatureInput input) {
    KeptPasses.Decision keep = KeptPasses.of(spark, plan.settings(), plan.method(), plan.d(), plan.rowEstimate(),
        input.columnar());
    if (keep != null) {
      LOG.info("fit: {}", keep.line());
      if (keep.keep()) {
        input.keepInMemory();
      }
    }
  }

  /**
   * A grouped fit ({@link GroupedFit}): the model of every group and the pooled model of all rows, in one pass.
   * Timings keys: groups (the count and the pass, with the groups' solves), model.
   */
  private FitResult grouped(FeatureInput input, Imputation impute, Stopwatch clock, List<String> warnings) {
    GroupedFit.Outcome out = GroupedFit.run(input, plan.groups(), solver(), modeFor(impute.values()), impute.prep(),
        blockRows());
    clock.lap("groups");
    ReadCounts counts = out.total();
    checkRows(counts, out.pooled().rowsUsed(), plan.settings().prepare().missing());
    ModelSolver.Solved pooled = out.pooled().solved();
    warnAboutLostData(counts, pooled.dropped(), warnings);
    long fitted = out.groups().stream().filter(GroupFit::hasModel).count();
    if (fitted == 0) {
      warnings.add("reduce.group-by = " + plan.groups().by().names() + ": no group has a model (" + out.groups()
          .size() + " groups, each below reduce.min-group-rows = " + plan.groups().minRows() + " usable rows or"
          + " without variance); lower reduce.min-group-rows or group by fewer columns");
    } else if (fitted < out.groups().size()) {
      warnings.add((out.groups().size() - fitted) + " of " + out.groups().size() + " groups have no model (fewer"
          + " than reduce.min-group-rows = " + plan.groups().minRows() + " usable rows, or no variance): listed"
          + " in the summary's groups; their rows are scored as an unknown group");
    }
    clock.lap("model");
    Groups groups = new Groups(plan.groups().by(), plan.groups().minRows(), out.onDriver(), out.groups());
    LOG.info("fit: {} groups, {} with a model, solved on the {}", out.groups().size(), fitted,
        out.onDriver() ? "driver" : "executors");
    return new FitResult(plan, pooled.model(), pooled.spectrum(), pooled.dropped(), counts.rowsRead(),
        counts.rowsDropped(), impute.cells(), counts.missingCells(), input.columnar(), passes(impute, null),
        pooled.kRule(), Linalg.describe(), clock.timings(), warnings, null, groups);
  }

  /**
   * The fit from {@code input.snapshots}: the selected snapshots' moments (of the planned features) merged in key
   * order as a balanced tree, then the same steps as a fit over their rows. Timings keys: snapshots (read and
   * merge), covariance, model.
   */
  private FitResult executeFromSnapshots() {
    Stopwatch clock = new Stopwatch();
    JobSettings.Input in = plan.settings().input();
    List<Snapshot> snaps = plan.snapshots().loaded();
    if (snaps.isEmpty()) {
      SnapshotStore store = SnapshotStore.open(spark.sparkContext().hadoopConfiguration(), "input.snapshots",
          in.snapshots(), false);
      snaps = store.readAll(plan.snapshots().selected());
    }
    List<String> stored = snaps.get(0).features();
    int d = plan.d();
    int[] cols = new int[d];
    for (int j = 0; j < d; j++) {
      cols[j] = stored.indexOf(plan.features().get(j));
    }
    List<Moments> parts = new ArrayList<>();
    List<SnapshotUse.KeyRows> keys = new ArrayList<>();
    long[] missing = new long[d];
    for (Snapshot s : snaps) {
      long read = 0;
      long used = 0;
      for (SnapshotEntry e : s.entries()) {
        parts.add(Moments.restore(new Moments.State(e.n(), e.shift(), e.mean(), e.packedM2())).select(cols));
        read += e.rowsRead();
        used += e.rowsUsed();
        for (int j = 0; j < d; j++) {
          missing[j] += e.missingCells()[cols[j]];
        }
      }
      keys.add(new SnapshotUse.KeyRows(s.key().values(), s.key().display(), read, used));
    }
    Moments merged = OrderedMerge.tree(parts, Moments::merge);
    ReadCounts counts = ReadCounts.of(0, 0, missing);
    clock.lap("snapshots");
    LOG.info("fit: merged {} snapshots of {} ({} rows), reading no rows", snaps.size(), in.snapshots(),
        merged.count());
    if (plan.settings().prepare().missing() == MissingPolicy.FAIL && counts.totalMissingCells() > 0) {
      throw new InvalidJobException("prepare.missing = fail: the rows of the selected snapshots had missing values"
          + " (null, NaN or infinite; those rows are not in the moments): " + missingSummary(counts)
          + "; set prepare.missing = drop-rows to fit on the complete rows");
    }
    if (merged.count() < 2) {
      throw new InvalidJobException(in.named() + (in.filtered() ? " where " + in.where() : "") + ": the selected"
          + " snapshots hold " + merged.count() + " usable row" + (merged.count() == 1 ? "" : "s")
          + "; a PCA needs at least 2 rows");
    }
    SnapshotUse use = new SnapshotUse(in.snapshots(), false, plan.snapshots().by().names(), keys, List.of());
    return finish(null, new Imputation(null, 0, 0), new FirstPass(null, merged, counts, use), clock,
        new ArrayList<>());
  }

  /** The steps after the first pass: kept columns, scales, the decomposition, k, the model. */
  private FitResult finish(FeatureInput input, Imputation impute, FirstPass first, Stopwatch clock,
      List<String> warnings) {
    ModelSolver solver = solver();
    ModelSolver.Solved solved;
    RandomizedAccuracy accuracy = null;
    if (plan.method() == Method.RANDOMIZED) {
      List<String> dropped = new ArrayList<>();
      int[] keep = solver.keptColumns(first.means(), first.variances(), dropped);
      solver.checkComponents(keep.length);
      double[] scales = solver.scales(first.variances(), keep);
      int l = Math.min(keep.length, MethodChoice.sketchSize(plan.settings().reduce(), keep.length));
      Randomized randomized = randomizedSpectrum(input, impute.values(), first.means(), keep, scales,
          first.variances(), first.used(), l, solver);
      accuracy = randomized.accuracy();
      solved = solver.finish(first.used(), first.means(), first.variances(), keep, scales, randomized.spectrum(),
          dropped);
    } else {
      solved = solver.solve(first.moments(), first.rFactor());
    }
    clock.lap(plan.method().word());
    List<String> dropped = solved.dropped();
    warnAboutLostData(first.counts(), dropped, warnings);
    warnings.addAll(solved.warnings());
    if (accuracy != null && !accuracy.targetMet()) {
      warnings.add(String.format(java.util.Locale.ROOT, "randomized method: the accuracy bound on the %d kept"
          + " components is %.3e of the largest eigenvalue after %d power iterations, above"
          + " reduce.randomized.tolerance = %s (reduce.randomized.max-power-iterations = %d reached): raise"
          + " reduce.randomized.oversample or max-power-iterations, or use the covariance method",
          accuracy.figures().k(), accuracy.figures().bound(), accuracy.powerIterationsRun(),
          Double.toString(accuracy.tolerance()), accuracy.maxPowerIterations()));
    }
    Spectrum spectrum = solved.spectrum();
    String rule = solved.kRule();
    PcaModel model = solved.model();
    int[] k = {model.k()};
    clock.lap("model");
    LOG.info("fit: {} rows used, k = {} ({}), first variance shares {}", first.used(), k[0], rule,
        firstRatios(spectrum, Math.min(3, spectrum.available())));
    ReadCounts counts = first.counts();
    return new FitResult(plan, model, spectrum, dropped, counts.rowsRead(), counts.rowsDropped(), impute.cells(),
        counts.missingCells(), input != null && input.columnar(), input == null ? 0 : passes(impute, accuracy), rule,
        Linalg.describe(), clock.timings(), warnings, first.snapshots(), null, accuracy);
  }

  /** The imputation values of impute-mean (null otherwise), the cells they fill and the pass that found them. */
  private record Imputation(double[] values, long cells, int passes) {
    BlockPrep prep() {
      return values == null ? BlockPrep.identity() : BlockPrep.imputeOnly(values);
    }
  }

  /**
   * The first pass over the rows: TSQR's R factor of the centred rows (with count and means), or the moments (with
   * the full Gram for the covariance method); exactly one of the two is set.
   */
  private record FirstPass(RFactor rFactor, Moments moments, ReadCounts counts, SnapshotUse snapshots) {
    FirstPass(RFactor rFactor, Moments moments, ReadCounts counts) {
      this(rFactor, moments, counts, null);
    }

    long used() {
      return rFactor != null ? rFactor.count() : moments.count();
    }

    double[] means() {
      return rFactor != null ? rFactor.mean() : moments.mean();
    }

    double[] variances() {
      return rFactor != null ? rFactor.variances() : moments.variances();
    }
  }

  /** Rows of the passes' blocks: reduce.block-rows, at most 8 MiB of doubles per block ({@link BlockBudget}). */
  private int blockRows() {
    return BlockBudget.rows(plan.settings().reduce().blockRows(), plan.d() + 1);
  }

  private FeatureInput open(Dataset<Row> table) {
    FeatureInput input = new FeatureInput(table, plan.features(), blockRows(), plan.splitBytes());
    LOG.info("fit: {} features, method {}, reading {}; {}", plan.d(), plan.method().word(), input.readPath(),
        Linalg.describe());
    return input;
  }

  /** With impute-mean, one pass for the column means (timing column-means); otherwise nothing. */
  private Imputation imputation(FeatureInput input, Stopwatch clock) {
    if (plan.settings().prepare().missing() != MissingPolicy.IMPUTE_MEAN) {
      return new Imputation(null, 0, 0);
    }
    int d = plan.d();
    PartialResult<ColumnStats> stats = input.run("fit/column-means", ColumnStats.factory(d),
        ReadMode.MARK, BlockPrep.identity());
    double[] impute = imputationValues(stats.value(), plan.features());
    clock.lap("column-means");
    return new Imputation(impute, stats.counts().totalMissingCells(), 1);
  }

  /** TSQR: one pass gives count, means and the R factor of the centred rows; the others start with the moments. */
  private FirstPass firstPass(FeatureInput input, Imputation impute, Stopwatch clock) {
    int d = plan.d();
    ReadMode mode = modeFor(impute.values());
    BlockPrep imputation = impute.prep();
    if (plan.method() == Method.TSQR) {
      PartialResult<RFactor> pass = input.run("fit/tsqr", RFactor.factory(d), mode, imputation);
      clock.lap("tsqr");
      return new FirstPass(pass.value(), null, pass.counts());
    }
    SnapshotPlan snapshots = plan.snapshots();
    if (snapshots != null && snapshots.writing()) {
      return keyedMoments(input, mode, imputation, snapshots, clock);
    }
    PartialResult<Moments> pass = input.run("fit/moments",
          Moments.factory(d, plan.method() == Method.COVARIANCE), mode, imputation);
    clock.lap("moments");
    return new FirstPass(null, pass.value(), pass.counts());
  }

  /**
   * The first pass of a fit that writes snapshots: the moments of each value of {@code snapshots.by} (one keyed
   * pass, blocks of {@code reduce.block-rows} rows per key), kept as the snapshots to write, and merged in the order
   * the keys appeared (a balanced tree) into the moments of all rows.
   */
  private FirstPass keyedMoments(FeatureInput input, ReadMode mode, BlockPrep imputation, SnapshotPlan snapshots,
      Stopwatch clock) {
    int d = plan.d();
    FeatureInput.KeyedResult<Moments> keyed = input.runKeyed("fit/moments", new SummaryAggregator<>(
        Moments.factory(d, true)), mode, imputation, snapshots.by(), blockRows());
    List<Snapshot> pending = new ArrayList<>();
    List<SnapshotUse.KeyRows> keys = new ArrayList<>();
    List<Moments> parts = new ArrayList<>();
    String fingerprint = PcaModel.fingerprint(plan.features(), plan.featureTypes());
    for (var e : keyed.byKey().entrySet()) {
      Moments m = e.getValue().value();
      ReadCounts c = e.getValue().counts();
      Moments.State state = m.state();
      SnapshotKey key = new SnapshotKey(snapshots.by().names(), snapshots.by().types(), e.getKey().texts());
      pending.add(new Snapshot(key, SnapshotStore.FORMAT_VERSION, Version.current(), plan.features(),
          plan.featureTypes(), fingerprint, List.of(), List.of(), plan.settings().input().source(), List.of(
              new SnapshotEntry(null, c.rowsRead(), m.count(), c.missingCells(), state.n(), state.shift(),
                  state.mean(), state.packedM2()))));
      keys.add(new SnapshotUse.KeyRows(e.getKey().texts(), key.display(), c.rowsRead(), m.count()));
      parts.add(Moments.restore(state));
    }
    Moments all = parts.isEmpty() ? Moments.empty(d, true) : OrderedMerge.tree(parts, Moments::merge);
    clock.lap("moments");
    LOG.info("fit: moments of {} snapshot keys ({}) to write to {}", keys.size(),
        String.join(", ", snapshots.by().names()), snapshots.store());
    return new FirstPass(null, all, keyed.total(), new SnapshotUse(snapshots.store(), true,
        snapshots.by().names(), keys, pending));
  }

  private void warnAboutLostData(ReadCounts counts, List<String> dropped, List<String> warnings) {
    if (!dropped.isEmpty()) {
      warnings.add("constant columns dropped: " + String.join(", ", dropped)
          + " (they carry no variance; exclude them with features.exclude to silence this)");
    }
    if (counts.rowsDropped() > 0) {
      warnings.add(counts.rowsDropped() + " of " + counts.rowsRead() + " rows dropped for missing values ("
          + missingSummary(counts) + "); set prepare.missing = impute-mean to keep them");
    }
  }

  /** The model solver of this plan's features and settings. */
  ModelSolver solver() {
    return ModelSolver.of(plan.features(), plan.featureTypes(), plan.settings().prepare().scaling(), plan.method(),
        plan.settings().reduce());
  }

  /**
   * Passes over the input: column means (impute-mean), the first pass, the randomized method's own (one per power
   * iteration run, those added for the tolerance included, and one more).
   */
  private int passes(Imputation impute, RandomizedAccuracy accuracy) {
    int own = accuracy != null ? accuracy.powerIterationsRun() + 1 : 0;
    return impute.passes() + 1 + own;
  }

  private static double[] imputationValues(ColumnStats stats, List<String> features) {
    long[] counts = stats.counts();
    List<String> empty = new ArrayList<>();
    for (int j = 0; j < counts.length; j++) {
      if (counts[j] == 0) {
        empty.add(features.get(j));
      }
    }
    if (!empty.isEmpty()) {
      throw new InvalidJobException("features.columns: column" + (empty.size() > 1 ? "s " : " ")
          + String.join(", ", empty) + (empty.size() > 1 ? " hold" : " holds")
          + " no value at all (every cell null, NaN or infinite);"
          + " prepare.missing = impute-mean cannot fill them: exclude them with features.exclude");
    }
    return stats.means();
  }

  private void checkRows(ReadCounts counts, long used, MissingPolicy missing) {
    String path = plan.settings().input().named();
    if (counts.rowsRead() == 0 && plan.settings().input().filtered()) {
      throw new InvalidJobException("input.where = \"" + plan.settings().input().where() + "\" selects no rows of"
          + " " + path + " (a fit needs at least 2 rows)");
    }
    if (counts.rowsRead() == 0) {
      throw new InvalidJobException(path + ": the table has no rows");
    }
    if (missing == MissingPolicy.FAIL && counts.totalMissingCells() > 0) {
      throw new InvalidJobException("prepare.missing = fail: the input has missing values (null, NaN or infinite): "
          + missingSummary(counts) + "; set prepare.missing = drop-rows or impute-mean");
    }
    if (used == 0) {
      throw new InvalidJobException("prepare.missing = " + missing.word() + ": no rows left: all "
          + counts.rowsRead() + " rows have a missing value (" + missingSummary(counts) + ")");
    }
    if (used < 2) {
      throw new InvalidJobException(path + ": only " + used
          + " usable row; a PCA needs at least 2 rows");
    }
  }

  private String missingSummary(ReadCounts counts) {
    long[] cells = counts.missingCells();
    List<String> parts = new ArrayList<>();
    for (int j = 0; j < cells.length; j++) {
      if (cells[j] > 0) {
        parts.add(plan.features().get(j) + ": " + cells[j] + " cells");
      }
    }
    return String.join(", ", parts);
  }

  private static BlockPrep centreAndScale(double[] impute, double[] means, double[] variances, int[] keep,
      double[] scales) {
    double[] factor = new double[means.length];
    for (int i = 0; i < keep.length; i++) {
      factor[keep[i]] = 1.0 / scales[i];
    }
    return BlockPrep.of(impute, means, factor, keep);
  }

  private static ReadMode modeFor(double[] impute) {
    return impute == null ? ReadMode.DROP : ReadMode.MARK;
  }

  /** The randomized method's spectrum and what its residuals say about the kept components. */
  private record Randomized(Spectrum spectrum, RandomizedAccuracy accuracy) {}

  /**
   * The randomized passes: the start, {@code reduce.randomized.power-iterations} power iterations, then more, one
   * at a time and each logged, while the bound on the kept components (from the last pass's own product: see
   * {@link RandomizedSubspace#rayleighRitz}) is above {@code reduce.randomized.tolerance}, up to
   * {@code reduce.randomized.max-power-iterations}. k is chosen afresh from each pass's spectrum, by the same rule as
   * the final model.
   */
  private Randomized randomizedSpectrum(FeatureInput input, double[] impute, double[] means, int[] keep,
      double[] scales, double[] variances, long n, int l, ModelSolver solver) {
    JobSettings.Reduce r = plan.settings().reduce();
    int dk = keep.length;
    double trace = 0;
    for (int i = 0; i < dk; i++) {
      trace += variances[keep[i]] / (scales[i] * scales[i]);
    }
    BlockPrep prep = centreAndScale(impute, means, variances, keep, scales);
    double[] q = RandomizedSubspace.start(dk, l, r.seed());
    List<Double> history = new ArrayList<>();
    int iterations = 0;
    while (true) {
      double[] z = sketchPass(input, impute, prep, q, dk, l, iterations + 1);
      RandomizedSubspace.Ritz ritz = RandomizedSubspace.rayleighRitz(q, z, dk, l, n, trace);
      RitzAccuracy figures = RitzAccuracy.of(ritz, solver.componentsOf(ritz.spectrum()));
      history.add(figures.bound());
      boolean met = figures.bound() <= r.randomizedTolerance();
      if (iterations >= r.powerIterations()) {
        LOG.info("fit: randomized, {} power iterations: bound {} on k = {} ({} reduce.randomized.tolerance = {})",
            iterations, String.format(java.util.Locale.ROOT, "%.3e", figures.bound()), figures.k(),
            met ? "within" : "above", r.randomizedTolerance());
        if (met || iterations >= r.maxPowerIterations()) {
          double[] byPass = history.stream().mapToDouble(Double::doubleValue).toArray();
          return new Randomized(ritz.spectrum(), new RandomizedAccuracy(figures, r.randomizedTolerance(), met,
              r.powerIterations(), iterations, r.maxPowerIterations(), byPass));
        }
        LOG.info("fit: randomized, one more power iteration (pass {} over the data) to reach"
            + " reduce.randomized.tolerance = {}, at most {} (reduce.randomized.max-power-iterations)",
            iterations + 2, r.randomizedTolerance(), r.maxPowerIterations());
      }
      q = RandomizedSubspace.next(z, dk, l);
      iterations++;
    }
  }

  /** One pass Z = A^T A Q over the input, Q broadcast to the executors for the pass. */
  private double[] sketchPass(FeatureInput input, double[] impute, BlockPrep prep, double[] q, int dk, int l,
      int number) {
    Broadcast<double[]> basis = spark.sparkContext().broadcast(q, scala.reflect.ClassTag$.MODULE$.apply(
        double[].class));
    try {
      return input.run("fit/randomized-pass-" + number, new BroadcastSketch(dk, l, basis), modeFor(impute), prep)
          .value().product();
    } finally {
      basis.destroy();
    }
  }

  private static String firstRatios(Spectrum s, int count) {
    double[] r = s.varianceShares();
    StringBuilder b = new StringBuilder();
    for (int i = 0; i < count; i++) {
      b.append(i == 0 ? "" : ", ").append(String.format(java.util.Locale.ROOT, "%.4f", r[i]));
    }
    return b.toString();
  }
}
