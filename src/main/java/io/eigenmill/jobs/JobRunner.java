package io.eigenmill.jobs;

import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.spark.FitTables;
import io.eigenmill.spark.OutputCommit;
import org.apache.spark.sql.SparkSession;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Runs one job file end to end: plan (fails before reading data), compute, write every output into a staging
 * folder, then commit. Nothing appears under {@code output.path} unless the whole run succeeded. The command line,
 * spark-submit and the tests all come through here.
 */
public final class JobRunner {
  private static final Logger LOG = LoggerFactory.getLogger(JobRunner.class);

  private JobRunner() {}

  public static JobPlan plan(SparkSession spark, JobSettings settings) {
    return Planner.plan(spark, settings);
  }

  public static RunResult run(SparkSession spark, JobSettings settings) {
    long started = System.nanoTime();
    JobPlan plan = Planner.plan(spark, settings);
    OutputCommit out = OutputCommit.begin(spark, settings.output().path(), settings.output().mode());
    try {
      FitResult fit = new FitJob(spark, plan).execute();
      FitTables.write(spark, fit, out);
      RunResult result = new RunResult(plan, fit, fit.model(), null, null, null, null, null, out.finalPath(),
          fit.timings(), fit.warnings(), (System.nanoTime() - started) / 1e9);
      out.writeText("summary.json", SummaryJson.render(result));
      out.commit();
      LOG.info("run: committed {}", out.finalPath());
      return result;
    } catch (RuntimeException | Error e) {
      out.abort();
      throw e;
    }
  }
}
