package io.eigenmill.record;

import io.eigenmill.io.GroupModels;
import io.eigenmill.io.PcaModel;
import io.eigenmill.kmeans.ClusterResult;
import io.eigenmill.kmeans.LabelResult;
import io.eigenmill.monitor.DataDriftResult;
import io.eigenmill.monitor.DriftResult;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.monitor.ReconstructionResult;
import io.eigenmill.monitor.ScoreSample;
import io.eigenmill.pca.FitResult;
import io.eigenmill.plan.JobPlan;
import java.util.List;
import java.util.Map;

/**
 * Everything one run produced, for the summary and the report. Sections that a run does not have are null: a fit has
 * {@code fit}; an apply run has none; {@code monitor} exists when scores were written; {@code clusters} when
 * clustering ran; {@code reconstruction} and {@code drift} when asked for; {@code dataDrift} in every apply run;
 * {@code labels} when saved centroids labelled the new data.
 *
 * @param model the model fitted or applied
 * @param drift the applied (or fitted) model against another model ({@code apply.compare-with})
 * @param dataDrift the new data against the applied model
 * @param timings seconds per stage, in order
 * @param warnings every warning of the run, each saying what to do about it
 */
public record RunResult(
    JobPlan plan,
    FitResult fit,
    PcaModel model,
    MonitorResult monitor,
    ReconstructionResult reconstruction,
    DriftResult drift,
    ClusterResult clusters,
    ScoreSample sample,
    String outputPath,
    Map<String, Double> timings,
    List<String> warnings,
    double totalSeconds,
    DataDriftResult dataDrift,
    LabelResult labels,
    GroupModels appliedGroups) {

  /** A run that applies no grouped model. */
  public RunResult(JobPlan plan, FitResult fit, PcaModel model, MonitorResult monitor,
      ReconstructionResult reconstruction, DriftResult drift, ClusterResult clusters, ScoreSample sample,
      String outputPath, Map<String, Double> timings, List<String> warnings, double totalSeconds,
      DataDriftResult dataDrift, LabelResult labels) {
    this(plan, fit, model, monitor, reconstruction, drift, clusters, sample, outputPath, timings, warnings,
        totalSeconds, dataDrift, labels, null);
  }

  /** A run without data drift or labels. */
  public RunResult(JobPlan plan, FitResult fit, PcaModel model, MonitorResult monitor,
      ReconstructionResult reconstruction, DriftResult drift, ClusterResult clusters, ScoreSample sample,
      String outputPath, Map<String, Double> timings, List<String> warnings, double totalSeconds) {
    this(plan, fit, model, monitor, reconstruction, drift, clusters, sample, outputPath, timings, warnings,
        totalSeconds, null, null);
  }
}
