package io.eigenmill.report;

import io.eigenmill.monitor.DriftResult;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * Drift against another model: principal angles between the retained subspaces, variance shares of both models
 * per component, and the largest mean shifts (in units of the old model's standard deviation).
 *
 * @param shifts the largest shifts by magnitude, largest first
 * @param shiftsTotal shared features with a shift in the record
 */
public record DriftModel(
    String otherModel,
    double[] angles,
    List<String> angleTexts,
    double[] varianceShareOld,
    double[] varianceShareNew,
    List<String> varianceShareOldTexts,
    List<String> varianceShareNewTexts,
    List<Shift> shifts,
    int shiftsTotal) {

  /** Mean shifts listed. */
  static final int SHIFTS = 15;

  public record Shift(String feature, double shift, String oldMean, String newMean, String shiftText) {}

  static DriftModel of(RunResult run) {
    DriftResult d = run.drift();
    if (d == null) {
      return null;
    }
    List<String> angles = new ArrayList<>();
    for (double a : d.principalAnglesDegrees()) {
      angles.add(Fmt.fixed(a, 1) + "°");
    }
    List<Shift> shifts = new ArrayList<>();
    for (DriftResult.MeanShift m : d.meanShifts()) {
      shifts.add(new Shift(m.feature(), m.shiftInOldSd(), Fmt.num(m.oldMean()), Fmt.num(m.newMean()),
          ClusterModel.signed(m.shiftInOldSd())));
    }
    shifts.sort(Comparator.comparingDouble((Shift s) -> -Math.abs(s.shift())));
    return new DriftModel(d.otherModel(), d.principalAnglesDegrees(), angles, d.varianceShareOld(),
        d.varianceShareNew(), percents(d.varianceShareOld()), percents(d.varianceShareNew()),
        List.copyOf(shifts.subList(0, Math.min(SHIFTS, shifts.size()))), d.meanShifts().size());
  }

  private static List<String> percents(double[] ratios) {
    List<String> out = new ArrayList<>();
    for (double r : ratios) {
      out.add(Fmt.percent(r, 2));
    }
    return out;
  }
}
