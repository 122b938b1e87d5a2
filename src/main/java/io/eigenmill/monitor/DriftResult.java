package io.eigenmill.monitor;

import java.util.List;

/**
 * How a model differs from an earlier one: principal angles between the retained subspaces (degrees, ascending),
 * variance shares of both, and mean shifts of each shared feature in units of the old model's standard
 * deviation (or of its scale, for centred-only models: then in original units divided by the old sd estimate).
 */
public record DriftResult(
    String otherModel,
    double[] principalAnglesDegrees,
    double[] varianceShareOld,
    double[] varianceShareNew,
    List<MeanShift> meanShifts) {

  public record MeanShift(String feature, double oldMean, double newMean, double shiftInOldSd) {}
}
