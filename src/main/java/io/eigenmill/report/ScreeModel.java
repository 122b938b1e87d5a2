package io.eigenmill.report;

import io.eigenmill.io.PcaModel;
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
 */
public record ScreeModel(
    int k,
    double target,
    String kRule,
    boolean logScale,
    boolean complete,
    int computed,
    int features,
    List<Component> components) {

  /** Eigenvalues spanning more decades than this are drawn on a log axis. */
  static final double LOG_DECADES = 3;
  /** At least this many components are drawn (more when k is larger: k + 5). */
  static final int SHOWN = 30;

  public record Component(int number, double eigenvalue, double ratio, double cumulative, boolean kept,
      String eigenvalueText, String ratioText, String cumulativeText) {}

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
    return new ScreeModel(k, target, rule, Scale.spansDecades(values, LOG_DECADES), complete, values.length,
        spectrum.d(), out);
  }

  /**
   * The applied model's spectrum: only eigenvalues and total variance are read from it (explained ratios); the
   * loadings passed along are the model's k retained columns.
   */
  private static Spectrum fromModel(PcaModel model) {
    return new Spectrum(model.d(), model.eigenvalues(), model.loadings(), model.totalVariance());
  }
}
