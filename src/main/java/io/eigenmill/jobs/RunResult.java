package io.eigenmill.jobs;

import io.eigenmill.plan.JobPlan;

/**
 * Everything one run produced, for the summary and the report. Sections that a run does not have are null.
 *
 * @param outputPath where the committed output lives
 */
public record RunResult(JobPlan plan, FitResult fit, String outputPath, double totalSeconds) {}
