package io.eigenmill.pca;

import io.eigenmill.io.PcaModel;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.plan.JobPlan;
import java.util.List;
import java.util.Map;

/**
 * The outcome of a fit: counts, the features kept and dropped, the spectrum and the chosen k, the model, timings and
 * warnings. The summary, the tables and the report are all views of this record.
 *
 * @param missingCells per planned feature, cells that were null, NaN or infinite
 * @param kRule how k was chosen, in words
 * @param snapshots what the fit wrote to or merged from a snapshot store; null without one
 * @param groups the groups of a grouped fit, each with its model; null without groups ({@code model} is then
 *     the one model; with groups it is the pooled model of all rows)
 * @param randomizedAccuracy what the randomized method's residuals say about its fit; null for other methods
 */
public record FitResult(
    JobPlan plan,
    PcaModel model,
    Spectrum spectrum,
    List<String> droppedConstant,
    long rowsRead,
    long rowsDropped,
    long imputedCells,
    long[] missingCells,
    boolean columnarRead,
    int passes,
    String kRule,
    String blas,
    Map<String, Double> timings,
    List<String> warnings,
    SnapshotUse snapshots,
    Groups groups,
    RandomizedAccuracy randomizedAccuracy) {

  /** A fit by a method other than randomized. */
  public FitResult(JobPlan plan, PcaModel model, Spectrum spectrum, List<String> droppedConstant, long rowsRead,
      long rowsDropped, long imputedCells, long[] missingCells, boolean columnarRead, int passes, String kRule,
      String blas, Map<String, Double> timings, List<String> warnings, SnapshotUse snapshots, Groups groups) {
    this(plan, model, spectrum, droppedConstant, rowsRead, rowsDropped, imputedCells, missingCells, columnarRead,
        passes, kRule, blas, timings, warnings, snapshots, groups, null);
  }

  /** A fit without groups. */
  public FitResult(JobPlan plan, PcaModel model, Spectrum spectrum, List<String> droppedConstant, long rowsRead,
      long rowsDropped, long imputedCells, long[] missingCells, boolean columnarRead, int passes, String kRule,
      String blas, Map<String, Double> timings, List<String> warnings, SnapshotUse snapshots) {
    this(plan, model, spectrum, droppedConstant, rowsRead, rowsDropped, imputedCells, missingCells, columnarRead,
        passes, kRule, blas, timings, warnings, snapshots, null);
  }

  /** A fit without a snapshot store. */
  public FitResult(JobPlan plan, PcaModel model, Spectrum spectrum, List<String> droppedConstant, long rowsRead,
      long rowsDropped, long imputedCells, long[] missingCells, boolean columnarRead, int passes, String kRule,
      String blas, Map<String, Double> timings, List<String> warnings) {
    this(plan, model, spectrum, droppedConstant, rowsRead, rowsDropped, imputedCells, missingCells, columnarRead,
        passes, kRule, blas, timings, warnings, null);
  }

  /** True when the fit merged snapshots instead of reading rows. */
  public boolean fromSnapshots() {
    return snapshots != null && !snapshots.written();
  }

  public long rowsUsed() {
    return model.rows();
  }
}
