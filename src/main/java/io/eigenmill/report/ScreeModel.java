package io.eigenmill.report;

import io.eigenmill.io.PcaModel;
import io.eigenmill.pca.RandomizedAccuracy;
import io.eigenmill.pca.math.RitzAccuracy;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.List;

/**
 * The scree plot: eigenvalues, variance shares and their cumulative sum as the fit computed them
 * ({@link Spectrum#varianceShares()}, {@link Spectrum#cumulativeVarianceShares()}), the chosen k and, when k was
 * chosen by a variance target, that target.
 *
 * @param target the variance target that chose k, or NaN when k was fixed or came from an applied model
 * @param logScale eigenvalues drawn on a log axis because they span more than {@link #LOG_DECADES} decades
 * @param complete true when all d eigenvalues were computed (else ratios are of the total variance, known anyway)
 * @param computed eigenvalues the method produced; {@code components} shows the first of them
 * @param accuracy the randomized method's own accuracy figures; null for the other methods and applied models
 */
public record ScreeModel(
    int k,
    double target,
    String kRule,
    boolean logScale,
    boolean complete,
    int computed,
    int features,
    List<Component> components,
    Accuracy accuracy) {

  /** Eigenvalues spanning more decades than this are drawn on a log axis. */
  static final double LOG_DECADES = 3;
  /** At least this many components are drawn (more when k is larger: k + 5). */
  static final int SHOWN = 30;

  public record Component(int number, double eigenvalue, double ratio, double cumulative, boolean kept,
      String eigenvalueText, String ratioText, String cumulativeText) {}

  /**
   * The randomized fit's accuracy ({@link RandomizedAccuracy}, README Methods) as the report shows it.
   *
   * @param rows per kept component: "PC i", eigenvalue, residual ||C v - theta v|| / theta_1, estimated angle bound
   */
  public record Accuracy(String bound, String tolerance, boolean met, String captured, String capturedBound,
      int iterations, int added, int maxIterations, List<List<String>> rows) {

    static Accuracy of(RandomizedAccuracy a, double[] eigenvalues) {
      RitzAccuracy f = a.figures();
      List<List<String>> rows = new ArrayList<>();
      for (int i = 0; i < f.k(); i++) {
        double angle = f.angleBounds()[i];
        rows.add(List.of("PC" + (i + 1), Fmt.num(eigenvalues[i]), Fmt.num(f.residuals()[i], 3),
            Double.isNaN(angle) ? "n/a" : Fmt.num(angle, 3)));
      }
      return new Accuracy(Fmt.num(f.bound(), 3), Fmt.num(a.tolerance(), 3), a.targetMet(),
          Fmt.percent(f.capturedVariance(), 2), Fmt.num(100 * f.capturedVarianceBound(), 3), a.powerIterationsRun(),
          a.extraPasses(), a.maxPowerIterations(), rows);
    }
  }

  static ScreeModel of(RunResult run) {
    PcaModel model = run.model();
    if (model == null && run.fit() == null) {
      return null;
    }
    Spectrum spectrum = run.fit() != null ? run.fit().spectrum() : fromModel(model);
    int k = run.fit() != null ? run.fit().model().k() : model.k();
    boolean byTarget = run.fit() != null && run.plan().settings().reduce().components().isEmpty();
    double target = byTarget ? run.plan().settings().reduce().varianceTarget() : Double.NaN;
    String rule = run.fit() != null ? run.fit().kRule() : "k of the applied model";
    double[] values = spectrum.eigenvalues();
    double[] ratios = spectrum.varianceShares();
    double[] cumulative = spectrum.cumulativeVarianceShares();
    int shown = Math.min(values.length, Math.max(SHOWN, k + 5));
    List<Component> out = new ArrayList<>(shown);
    for (int i = 0; i < shown; i++) {
      out.add(new Component(i + 1, values[i], ratios[i], cumulative[i], i < k, Fmt.num(values[i]),
          Fmt.percent(ratios[i], 2), Fmt.percent(cumulative[i], 2)));
    }
    boolean complete = model != null ? model.eigenvaluesComplete() : values.length == spectrum.d();
    RandomizedAccuracy accuracy = run.fit() != null ? run.fit().randomizedAccuracy() : null;
    return new ScreeModel(k, target, rule, Scale.spansDecades(values, LOG_DECADES), complete, values.length,
        spectrum.d(), out, accuracy == null ? null : Accuracy.of(accuracy, values));
  }

  /**
   * The applied model's spectrum: only eigenvalues and total variance are read from it (explained ratios); the
   * loadings passed along are the model's k retained columns.
   */
  private static Spectrum fromModel(PcaModel model) {
    return new Spectrum(model.d(), model.eigenvalues(), model.loadings(), model.totalVariance());
  }
}
