package io.eigenmill.pca;

import io.eigenmill.Version;
import io.eigenmill.io.PcaModel;
import io.eigenmill.math.Moments;
import io.eigenmill.pca.math.RFactor;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.Choices.Scaling;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * From a first pass's summary to a model, without Spark: the kept (non-constant) columns, the scales, the spectrum
 * of the covariance or of the R factor, k, and the model. The pooled fit runs it on the driver; a grouped fit runs
 * it once per group, on the driver or on the executors (it is serializable and holds only settings).
 *
 * @param features the planned features in order, with their input types
 */
public record ModelSolver(List<String> features, List<String> featureTypes, Scaling scaling, Method method,
    int components, double varianceTarget, int maxComponents) implements Serializable {

  /**
   * The solver of {@code reduce}'s rule for k: {@code reduce.components} (0 here when unset), else the smallest k
   * reaching {@code reduce.variance-target}, at most {@code reduce.max-components}. Only plain values are kept: the
   * solver travels to the executors.
   */
  public static ModelSolver of(List<String> features, List<String> featureTypes, Scaling scaling, Method method,
      JobSettings.Reduce reduce) {
    return new ModelSolver(List.copyOf(features), List.copyOf(featureTypes), scaling, method,
        reduce.components().orElse(0), reduce.varianceTarget(), reduce.maxComponents());
  }

  /**
   * What the solver made of one summary.
   *
   * @param dropped the constant columns left out
   * @param kRule how k was chosen, in words
   * @param warnings what the user should know (k capped, target not reached)
   */
  public record Solved(PcaModel model, Spectrum spectrum, List<String> dropped, String kRule, List<String> warnings)
      implements Serializable {}

  /** Solves the covariance method's moments (with the Gram) or TSQR's R factor; exactly one is not null. */
  public Solved solve(Moments moments, RFactor rFactor) {
    double[] means = rFactor != null ? rFactor.mean() : moments.mean();
    double[] variances = rFactor != null ? rFactor.variances() : moments.variances();
    long n = rFactor != null ? rFactor.count() : moments.count();
    List<String> dropped = new ArrayList<>();
    int[] keep = keptColumns(means, variances, dropped);
    checkComponents(keep.length);
    double[] scales = scales(variances, keep);
    Spectrum spectrum = rFactor != null ? Spectrum.ofRFactor(rFactor, keep, inverses(scales))
        : covarianceSpectrum(moments, keep, scales, this::componentsOf);
    return finish(n, means, variances, keep, scales, spectrum, dropped);
  }

  /** The model of a computed spectrum (the randomized method's, whose passes need Spark). */
  public Solved finish(long n, double[] means, double[] variances, int[] keep, double[] scales, Spectrum spectrum,
      List<String> dropped) {
    List<String> warnings = new ArrayList<>();
    int[] k = new int[1];
    String rule = chooseK(spectrum, k, warnings);
    return new Solved(model(n, means, variances, keep, scales, spectrum, k[0]), spectrum, dropped, rule, warnings);
  }

  /** The k {@link #finish} would choose for {@code spectrum} (its warnings dropped). */
  public int componentsOf(Spectrum spectrum) {
    int[] k = new int[1];
    chooseK(spectrum, k, new ArrayList<>());
    return k[0];
  }

  /**
   * Columns kept: those whose sample standard deviation exceeds 64 eps |mean| (and zero). A constant column's
   * computed deviation is rounding noise of order eps |mean|, so 64 eps |mean| separates it from any real spread
   * (an offset of 1e9 with deviation 1e-3 is kept: 1e-3 >> 64 * 2.2e-16 * 1e9 = 1.4e-5).
   */
  public int[] keptColumns(double[] means, double[] variances, List<String> dropped) {
    List<Integer> keep = new ArrayList<>();
    for (int j = 0; j < means.length; j++) {
      double sd = Math.sqrt(variances[j]);
      if (sd > 64 * Math.ulp(1.0) * Math.abs(means[j]) && sd > 0) {
        keep.add(j);
      } else {
        dropped.add(features.get(j));
      }
    }
    if (keep.isEmpty()) {
      throw new InvalidJobException("features.columns: every feature column is constant ("
          + String.join(", ", dropped) + "): there is no variance to analyse");
    }
    return keep.stream().mapToInt(Integer::intValue).toArray();
  }

  /**
   * {@code reduce.components} against the non-constant features, before the decomposition: the planner has checked
   * it against all d features, but which columns are constant is known only from the first pass.
   */
  public void checkComponents(int dk) {
    if (components > 0 && components > dk) {
      throw new InvalidJobException("reduce.components = " + components + ": more components"
          + " than the " + dk + " non-constant features");
    }
  }

  /** The scale of each kept column: its standard deviation with standardize, else 1. */
  public double[] scales(double[] variances, int[] keep) {
    boolean standardize = scaling == Scaling.STANDARDIZE;
    double[] scales = new double[keep.length];
    for (int i = 0; i < keep.length; i++) {
      scales[i] = standardize ? Math.sqrt(variances[keep[i]]) : 1.0;
    }
    return scales;
  }

  private PcaModel model(long n, double[] means, double[] variances, int[] keep, double[] scales, Spectrum spectrum,
      int k) {
    List<String> kept = new ArrayList<>();
    List<String> keptTypes = new ArrayList<>();
    for (int j : keep) {
      kept.add(features.get(j));
      keptTypes.add(featureTypes.get(j));
    }
    double[] loadings = new double[keep.length * k];
    System.arraycopy(spectrum.loadings(), 0, loadings, 0, loadings.length);
    return new PcaModel(PcaModel.FORMAT_VERSION, Version.current(), kept, keptTypes, scaling.word(), method, n,
        select(means, keep), scales, k, loadings, spectrum.eigenvalues(), method != Method.RANDOMIZED,
        spectrum.totalVariance(), PcaModel.fingerprint(kept, keptTypes), sqrtOf(select(variances, keep)));
  }

  /** k and the rule that chose it; {@code reduce.components} is at most the kept columns ({@link #checkComponents}). */
  private String chooseK(Spectrum spectrum, int[] k, List<String> warnings) {
    if (components > 0) {
      k[0] = Math.min(components, spectrum.available());
      return "reduce.components = " + components;
    }
    int reach = spectrum.smallestReaching(varianceTarget);
    if (reach < 0) {
      k[0] = Math.min(spectrum.available(), maxComponents);
      warnings.add("the " + spectrum.available() + " components computed explain only "
          + String.format(Locale.ROOT, "%.4f", spectrum.cumulativeVarianceShares()[spectrum.available() - 1])
          + " of the variance, below reduce.variance-target = " + varianceTarget + "; kept k = " + k[0]
          + ": raise reduce.max-components to reach the target");
      return "variance target " + varianceTarget + " not reached within " + spectrum.available()
          + " computed components";
    }
    if (reach > maxComponents) {
      k[0] = maxComponents;
      warnings.add("reaching reduce.variance-target = " + varianceTarget + " needs k = " + reach
          + " > reduce.max-components = " + maxComponents + "; kept k = " + k[0]
          + ": raise reduce.max-components to keep more");
      return "capped by reduce.max-components = " + maxComponents;
    }
    k[0] = reach;
    return "smallest k with cumulative explained variance >= " + varianceTarget;
  }

  static double[] sqrtOf(double[] values) {
    double[] out = new double[values.length];
    for (int i = 0; i < out.length; i++) {
      out[i] = Math.sqrt(values[i]);
    }
    return out;
  }

  static double[] select(double[] values, int[] keep) {
    double[] out = new double[keep.length];
    for (int i = 0; i < keep.length; i++) {
      out[i] = values[keep[i]];
    }
    return out;
  }

  static double[] inverses(double[] scales) {
    double[] f = new double[scales.length];
    for (int i = 0; i < f.length; i++) {
      f[i] = 1.0 / scales[i];
    }
    return f;
  }

  private static Spectrum covarianceSpectrum(Moments moments, int[] keep, double[] scales,
      java.util.function.ToIntFunction<Spectrum> components) {
    int d = moments.dimension();
    double[] full = moments.covariance();
    int dk = keep.length;
    double[] c = new double[dk * dk];
    for (int b = 0; b < dk; b++) {
      for (int a = 0; a < dk; a++) {
        c[a + b * dk] = full[keep[a] + keep[b] * d] / (scales[a] * scales[b]);
      }
    }
    return Spectrum.ofCovarianceKept(c, dk, components);
  }
}
