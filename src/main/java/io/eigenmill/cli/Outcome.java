package io.eigenmill.cli;

import io.eigenmill.pca.FitResult;
import io.eigenmill.record.RunResult;
import java.util.Locale;

/** The few lines {@code run} prints when it succeeds. */
final class Outcome {
  private Outcome() {}

  static String describe(RunResult run) {
    StringBuilder s = new StringBuilder();
    FitResult fit = run.fit();
    if (fit != null) {
      double[] cumulative = fit.spectrum().cumulativeVarianceShares();
      int k = fit.model().k();
      s.append(String.format(Locale.ROOT, "fit: %,d rows (%,d dropped), %d features, method %s, k = %d "
              + "explaining %.4f of the variance%n", fit.rowsUsed(), fit.rowsDropped(), fit.model().d(),
          fit.model().method().word(), k, k > 0 ? cumulative[k - 1] : 0.0));
    }
    if (run.monitor() != null) {
      var m = run.monitor();
      s.append(String.format(Locale.ROOT, "scores: %,d rows scored with k = %d; flagged by T2 %,d, by Q %,d, by both "
          + "%,d (confidence %s; Q limit by %s, h0 = %.4g)%n", m.rowsScored(), m.k(), m.flaggedT2(), m.flaggedQ(),
          m.flaggedBoth(), m.confidence(), m.qRule(), m.qH0()));
    }
    if (run.clusters() != null) {
      s.append(String.format(Locale.ROOT, "clusters: k = %d (%s), silhouette %.4f%n", run.clusters().k(),
          run.clusters().selectionRule(), run.clusters().silhouette()));
    }
    for (String w : run.warnings()) {
      s.append("warning: ").append(w).append('\n');
    }
    s.append(String.format(Locale.ROOT, "output: %s (%.1f s)%n", run.outputPath(), run.totalSeconds()));
    s.append("summary: ").append(run.outputPath()).append("/summary.json");
    return s.toString();
  }
}
