package io.eigenmill.run;

import io.eigenmill.io.InputFilter;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.ScoringPass;
import io.eigenmill.monitor.ScoringStage;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.JobSettings;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Comparator;
import java.util.stream.Stream;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/**
 * Runs over a Dataset the caller holds that return their scores unwritten (the Java API's lazy mode): the same
 * plan, fit and scoring pass as {@link JobRunner#run}, with the scores left as a Dataset that runs the scoring pass
 * when the caller acts on it.
 */
public final class GivenRuns {
  private GivenRuns() {}

  /**
   * What a lazy run gives back.
   *
   * @param run the fit's run record; null for an apply (nothing has run)
   * @param t2Limit the scores' T2 limit (fitted rows for a fit, new rows for an apply)
   * @param qLimit the scores' Q limit
   * @param scores the lazy scores: keys, then the scores, T2 and Q
   */
  public record Lazy(RunResult run, PcaModel model, double t2Limit, double qLimit, Dataset<Row> scores) {}

  /**
   * Fits {@code settings} over {@code given}: the runner fits into a scratch folder (model tables and summary,
   * without scores), deleted before returning; the scores are not computed here.
   */
  public static Lazy fit(SparkSession spark, JobSettings settings, Dataset<Row> given) {
    Path scratch;
    try {
      scratch = Files.createTempDirectory("eigenmill-given-");
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    try {
      JobSettings.Output o = settings.output();
      var output = new JobSettings.Output(scratch.resolve("run").toString(), o.mode(), false, false,
          o.reportSample(), o.snapshots(), o.snapshotsBy());
      JobSettings s = settings;
      JobSettings scratchSettings = new JobSettings(s.name(), s.sourceFile(), s.input(), s.features(), s.prepare(),
          s.reduce(), s.monitor(), s.apply(), s.cluster(), output, s.spark(), s.warnings());
      RunResult run = JobRunner.run(spark, scratchSettings, given);
      return lazyScores(spark, run.plan(), run, run.model(), given, true);
    } finally {
      delete(scratch);
    }
  }

  /** Plans an apply of {@code apply.model} over {@code given} (all the planner's checks); scores nothing yet. */
  public static Lazy apply(SparkSession spark, JobSettings settings, Dataset<Row> given) {
    PcaModel model = ModelStore.read(spark, "apply.model", settings.apply().model());
    JobPlan plan = JobRunner.planGiven(spark, settings, model, given);
    return lazyScores(spark, plan, null, model, given, false);
  }

  /** True when {@code apply.model} holds one model per group. */
  public static boolean groupedModel(SparkSession spark, JobSettings settings) {
    return ModelStore.grouped(spark, "apply.model", settings.apply().model());
  }

  /**
   * The T2 and Q limits of a run's scores: the scoring pass's when it ran, else those it would use; NaN for one
   * model per group (each group has its own).
   */
  public static double[] limits(RunResult run, boolean fittedRows) {
    if (run.monitor() != null) {
      return new double[] {run.monitor().t2Limit(), run.monitor().qLimit()};
    }
    if (run.appliedGroups() != null || run.fit() != null && run.fit().groups() != null) {
      return new double[] {Double.NaN, Double.NaN};
    }
    ScoringPass.Limits limits = ScoringPass.Limits.of(run.model(), run.plan().settings().monitor(), fittedRows);
    return new double[] {limits.t2(), limits.q()};
  }

  /** Rows a fit used (after missing-value handling), or rows an apply scored; -1 when neither ran. */
  public static long rows(RunResult run) {
    return run.fit() != null ? run.fit().rowsUsed() : run.monitor() != null ? run.monitor().rowsScored() : -1;
  }

  private static Lazy lazyScores(SparkSession spark, JobPlan plan, RunResult run, PcaModel model,
      Dataset<Row> given, boolean fittedRows) {
    ScoringPass.Limits limits = ScoringPass.Limits.of(model, plan.settings().monitor(), fittedRows);
    Dataset<Row> scores = new ScoringStage(spark, plan, model, null)
        .lazyScores(InputFilter.apply(given, plan.settings().input()), fittedRows);
    return new Lazy(run, model, limits.t2(), limits.q(), scores);
  }

  private static void delete(Path dir) {
    try (Stream<Path> files = Files.walk(dir)) {
      files.sorted(Comparator.reverseOrder()).forEach(p -> p.toFile().delete());
    } catch (IOException e) {
      // a scratch folder left in the temporary directory is harmless
    }
  }
}
