package io.eigenmill.jobs;

import io.eigenmill.plan.JobPlan;
import java.util.List;
import java.util.Map;

/**
 * Everything one run produced, for the summary and the report. Sections that a run does not have are null: a fit has
 * {@code fit}; an apply run has none; {@code monitor} exists when scores were written; {@code clusters} when
 * clustering ran; {@code reconstruction} and {@code drift} when asked for.
 *
 * @param model the model fitted or applied
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
    double totalSeconds) {}
