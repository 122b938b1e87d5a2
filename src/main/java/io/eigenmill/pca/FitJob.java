package io.eigenmill.pca;

import io.eigenmill.Version;
import io.eigenmill.engine.FeatureInput;
import io.eigenmill.engine.PartialResult;
import io.eigenmill.engine.ReadCounts;
import io.eigenmill.engine.ReadMode;
import io.eigenmill.engine.Stopwatch;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.TableLoader;
import io.eigenmill.math.BlockPrep;
import io.eigenmill.math.ColumnStats;
import io.eigenmill.math.Linalg;
import io.eigenmill.math.Moments;
import io.eigenmill.pca.math.RFactor;
import io.eigenmill.pca.math.RandomizedSubspace;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.plan.JobPlan;
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
 * <p>Passes: covariance 1, TSQR 1, randomized 2 + power-iterations; one more with impute-mean (the column means). Missing values follow
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

  public FitResult execute(Dataset<Row> table) {
    JobSettings s = plan.settings();
    Stopwatch clock = new Stopwatch();
    List<String> warnings = new ArrayList<>();
    int d = plan.d();
    FeatureInput input = new FeatureInput(table, plan.features(), s.reduce().blockRows());
    LOG.info("fit: {} features, method {}, reading {}; {}", d, plan.method().word(), input.readPath(),
        Linalg.describe());
    clock.lap("plan");
    MissingPolicy missing = s.prepare().missing();
    double[] impute = null;
    int passes = 0;
    long imputed = 0;
    if (missing == MissingPolicy.IMPUTE_MEAN) {
      PartialResult<ColumnStats> stats = input.run("fit/column-means", new Aggregators.ColumnStatsPass(d),
          ReadMode.MARK, BlockPrep.identity());
      passes++;
      impute = imputationValues(stats.value(), plan.features());
      imputed = stats.counts().totalMissingCells();
      clock.lap("column-means");
    }
    ReadMode mode = modeFor(impute);
    BlockPrep imputation = impute == null ? BlockPrep.identity() : BlockPrep.imputeOnly(impute);
    // TSQR: one pass gives count, means and the R factor of the centred rows; the others start with the moments
    RFactor rFactor = null;
    Moments moments = null;
    ReadCounts counts;
    if (plan.method() == Method.TSQR) {
      PartialResult<RFactor> pass = input.run("fit/tsqr", new Aggregators.RFactorPass(d), mode, imputation);
      rFactor = pass.value();
      counts = pass.counts();
      clock.lap("tsqr");
    } else {
      PartialResult<Moments> pass = input.run("fit/moments",
          new Aggregators.MomentsPass(d, plan.method() == Method.COVARIANCE), mode, imputation);
      moments = pass.value();
      counts = pass.counts();
      clock.lap("moments");
    }
    passes++;
    long used = rFactor != null ? rFactor.count() : moments.count();
    checkRows(counts, used, missing);
    double[] means = rFactor != null ? rFactor.mean() : moments.mean();
    double[] variances = rFactor != null ? rFactor.variances() : moments.variances();
    List<String> dropped = new ArrayList<>();
    int[] keep = keptColumns(means, variances, dropped);
    if (!dropped.isEmpty()) {
      warnings.add("constant columns dropped: " + String.join(", ", dropped)
          + " (they carry no variance; exclude them with features.exclude to silence this)");
    }
    if (counts.rowsDropped() > 0) {
      warnings.add(counts.rowsDropped() + " of " + counts.rowsRead() + " rows dropped for missing values ("
          + missingSummary(counts) + "); set prepare.missing = impute-mean to keep them");
    }
    int dk = keep.length;
    double[] keptMeans = select(means, keep);
    double[] scales = new double[dk];
    for (int i = 0; i < dk; i++) {
      scales[i] = s.prepare().scaling() == Scaling.STANDARDIZE ? Math.sqrt(variances[keep[i]]) : 1.0;
    }
    Spectrum spectrum = switch (plan.method()) {
      case COVARIANCE -> covarianceSpectrum(moments, keep, scales);
      case TSQR -> Spectrum.ofRFactor(rFactor, keep, inverses(scales));
      default -> {
        int l = Math.min(dk, MethodChoice.sketchSize(s.reduce(), dk));
        passes += s.reduce().powerIterations() + 1;
        yield randomizedSpectrum(input, impute, means, keep, scales, variances, used, l);
      }
    };
    clock.lap(plan.method().word());
    int[] k = new int[1];
    String rule = chooseK(s.reduce(), spectrum, dk, k, warnings);
    List<String> kept = new ArrayList<>();
    List<String> keptTypes = new ArrayList<>();
    for (int j : keep) {
      kept.add(plan.features().get(j));
      keptTypes.add(plan.featureTypes().get(j));
    }
    double[] loadings = new double[dk * k[0]];
    System.arraycopy(spectrum.loadings(), 0, loadings, 0, loadings.length);
    PcaModel model = new PcaModel(PcaModel.FORMAT_VERSION, Version.current(), kept, keptTypes,
        s.prepare().scaling().word(), plan.method().word(), used, keptMeans, scales, k[0], loadings,
        spectrum.eigenvalues(), plan.method() != Method.RANDOMIZED, spectrum.totalVariance(),
        PcaModel.fingerprint(kept, keptTypes), sqrtOf(select(variances, keep)));
    clock.lap("model");
    LOG.info("fit: {} rows used, k = {} ({}), first ratios {}", used, k[0], rule,
        firstRatios(spectrum, Math.min(3, spectrum.available())));
    return new FitResult(plan, model, spectrum, dropped, counts.rowsRead(), counts.rowsDropped(), imputed,
        counts.missingCells(), input.columnar(), passes, rule, Linalg.describe(), clock.timings(), warnings);
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
    String path = plan.settings().input().path();
    if (counts.rowsRead() == 0) {
      throw new InvalidJobException("input.path = " + path + ": the table has no rows");
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
      throw new InvalidJobException("input.path = " + path + ": only " + used
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

  /**
   * Columns kept: those whose sample standard deviation exceeds 64 eps |mean| (and zero). A constant column's
   * computed deviation is rounding noise of order eps |mean|, so 64 eps |mean| separates it from any real spread
   * (an offset of 1e9 with deviation 1e-3 is kept: 1e-3 >> 64 * 2.2e-16 * 1e9 = 1.4e-5).
   */
  private int[] keptColumns(double[] means, double[] variances, List<String> dropped) {
    List<Integer> keep = new ArrayList<>();
    for (int j = 0; j < means.length; j++) {
      double sd = Math.sqrt(variances[j]);
      if (sd > 64 * Math.ulp(1.0) * Math.abs(means[j]) && sd > 0) {
        keep.add(j);
      } else {
        dropped.add(plan.features().get(j));
      }
    }
    if (keep.isEmpty()) {
      throw new InvalidJobException("features.columns: every feature column is constant ("
          + String.join(", ", dropped) + "): there is no variance to analyse");
    }
    return keep.stream().mapToInt(Integer::intValue).toArray();
  }

  private static double[] sqrtOf(double[] values) {
    double[] out = new double[values.length];
    for (int i = 0; i < out.length; i++) {
      out[i] = Math.sqrt(values[i]);
    }
    return out;
  }

  private static double[] select(double[] values, int[] keep) {
    double[] out = new double[keep.length];
    for (int i = 0; i < keep.length; i++) {
      out[i] = values[keep[i]];
    }
    return out;
  }

  private static Spectrum covarianceSpectrum(Moments moments, int[] keep, double[] scales) {
    int d = moments.dimension();
    double[] full = moments.covariance();
    int dk = keep.length;
    double[] c = new double[dk * dk];
    for (int b = 0; b < dk; b++) {
      for (int a = 0; a < dk; a++) {
        c[a + b * dk] = full[keep[a] + keep[b] * d] / (scales[a] * scales[b]);
      }
    }
    return Spectrum.ofCovariance(c, dk);
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

  private static double[] inverses(double[] scales) {
    double[] f = new double[scales.length];
    for (int i = 0; i < f.length; i++) {
      f[i] = 1.0 / scales[i];
    }
    return f;
  }

  private Spectrum randomizedSpectrum(FeatureInput input, double[] impute, double[] means, int[] keep,
      double[] scales, double[] variances, long n, int l) {
    JobSettings.Reduce r = plan.settings().reduce();
    int dk = keep.length;
    double trace = 0;
    for (int i = 0; i < dk; i++) {
      trace += variances[keep[i]] / (scales[i] * scales[i]);
    }
    BlockPrep prep = centreAndScale(impute, means, variances, keep, scales);
    double[] q = RandomizedSubspace.start(dk, l, r.seed());
    double[] z = null;
    for (int it = 0; it <= r.powerIterations(); it++) {
      Broadcast<double[]> basis = spark.sparkContext().broadcast(q, scala.reflect.ClassTag$.MODULE$.apply(
          double[].class));
      try {
        z = input.run("fit/randomized-pass-" + (it + 1), new Aggregators.SketchPass(dk, l, basis), modeFor(impute),
            prep).value().product();
      } finally {
        basis.destroy();
      }
      if (it < r.powerIterations()) {
        q = RandomizedSubspace.next(z, dk, l);
      }
    }
    return RandomizedSubspace.finish(q, z, dk, l, n, trace);
  }

  private static String chooseK(JobSettings.Reduce r, Spectrum spectrum, int dk, int[] k, List<String> warnings) {
    if (r.components().isPresent()) {
      int want = r.components().getAsInt();
      if (want > dk) {
        throw new InvalidJobException("reduce.components = " + want + ": more components than the " + dk
            + " non-constant features");
      }
      k[0] = Math.min(want, spectrum.available());
      return "reduce.components = " + want;
    }
    int reach = spectrum.smallestReaching(r.varianceTarget());
    if (reach < 0) {
      k[0] = Math.min(spectrum.available(), r.maxComponents());
      warnings.add("the " + spectrum.available() + " components computed explain only "
          + String.format(java.util.Locale.ROOT, "%.4f", spectrum.cumulativeVarianceShares()[spectrum.available() - 1])
          + " of the variance, below reduce.variance-target = " + r.varianceTarget() + "; kept k = " + k[0]
          + ": raise reduce.max-components to reach the target");
      return "variance target " + r.varianceTarget() + " not reached within " + spectrum.available()
          + " computed components";
    }
    if (reach > r.maxComponents()) {
      k[0] = r.maxComponents();
      warnings.add("reaching reduce.variance-target = " + r.varianceTarget() + " needs k = " + reach
          + " > reduce.max-components = " + r.maxComponents() + "; kept k = " + k[0]
          + ": raise reduce.max-components to keep more");
      return "capped by reduce.max-components = " + r.maxComponents();
    }
    k[0] = reach;
    return "smallest k with cumulative explained variance >= " + r.varianceTarget();
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
