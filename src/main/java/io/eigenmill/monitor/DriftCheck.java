package io.eigenmill.monitor;

import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.math.PrincipalAngles;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import org.apache.spark.sql.SparkSession;

/**
 * Compares a model with an earlier one on the features they share: principal angles between their retained
 * subspaces, their explained-variance ratios, and the mean shift of each shared feature in units of the earlier
 * model's standard deviation. Pure: both models are already in memory.
 */
public final class DriftCheck {
  private DriftCheck() {}

  /**
   * Refuses {@code apply.compare-with} naming the model the job applies: the same folder (after resolving
   * {@code model/} and the path's spelling) or an identical model ({@link PcaModel#contentFingerprint}) elsewhere.
   * Such a comparison can only show zero angles and zero shifts.
   *
   * @throws InvalidJobException naming the setting, its value and the rule
   */
  public static void refuseSelf(SparkSession spark, JobSettings.Apply apply, PcaModel applied, PcaModel other) {
    String where = ModelStore.location(spark, apply.model());
    boolean sameFolder = where.equals(ModelStore.location(spark, apply.compareWith()));
    String fingerprint = applied.contentFingerprint();
    if (sameFolder || fingerprint.equals(other.contentFingerprint())) {
      throw new InvalidJobException("apply.compare-with = " + apply.compareWith() + ": is the model this job applies"
          + " (apply.model = " + apply.model() + ", " + (sameFolder ? "the same folder " + where
              : "an identical model, fingerprint " + fingerprint) + "); compare-with must name another model, e.g."
          + " an earlier fit. The new data against apply.model is in every apply run (summary.json data_drift,"
          + " data-drift/)");
    }
  }

  /** {@code earlier} is the reference (e.g. last week's model), {@code current} the model applied now. */
  public static DriftResult compare(PcaModel earlier, PcaModel current, String earlierPath) {
    List<String> shared = new ArrayList<>();
    for (String f : current.features()) {
      if (earlier.features().contains(f)) {
        shared.add(f);
      }
    }
    int d = shared.size();
    double[] a = rows(earlier, shared);
    double[] b = rows(current, shared);
    double[] angles = PrincipalAngles.between(a, earlier.k(), b, current.k(), d);
    double[] degrees = new double[angles.length];
    for (int i = 0; i < angles.length; i++) {
      degrees[i] = Math.toDegrees(angles[i]);
    }
    List<DriftResult.MeanShift> shifts = new ArrayList<>();
    for (String f : shared) {
      int i = earlier.features().indexOf(f);
      int j = current.features().indexOf(f);
      double sd = earlier.sds()[i];
      double shift = sd > 0 ? (current.means()[j] - earlier.means()[i]) / sd : 0.0;
      shifts.add(new DriftResult.MeanShift(f, earlier.means()[i], current.means()[j], shift));
    }
    shifts.sort(Comparator.comparingDouble((DriftResult.MeanShift m) -> -Math.abs(m.shiftInOldSd())));
    return new DriftResult(earlierPath, degrees, ratios(earlier), ratios(current), shifts);
  }

  /**
   * The model's loadings restricted to the shared features, re-orthonormalised when features were left out (the
   * restriction of orthonormal columns is no longer orthonormal).
   */
  private static double[] rows(PcaModel m, List<String> shared) {
    int d = shared.size();
    double[] out = new double[d * m.k()];
    for (int c = 0; c < m.k(); c++) {
      for (int i = 0; i < d; i++) {
        out[i + c * d] = m.loading(m.features().indexOf(shared.get(i)), c);
      }
    }
    if (d < m.d() && m.k() > 0 && d >= m.k()) {
      io.eigenmill.math.Linalg.orthonormalizeColumns(out, d, m.k());
    }
    return out;
  }

  private static double[] ratios(PcaModel m) {
    double[] r = new double[m.k()];
    for (int c = 0; c < m.k(); c++) {
      r[c] = m.totalVariance() > 0 ? m.eigenvalues()[c] / m.totalVariance() : 0.0;
    }
    return r;
  }
}
