package io.eigenmill.run;

import io.eigenmill.engine.Stopwatch;
import io.eigenmill.io.InputFiles;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.TableLoader;
import io.eigenmill.io.WriterSession;
import io.eigenmill.kmeans.ClusterOutcome;
import io.eigenmill.kmeans.ClusterResult;
import io.eigenmill.kmeans.ClusterStage;
import io.eigenmill.kmeans.LabelResult;
import io.eigenmill.monitor.DataDriftResult;
import io.eigenmill.monitor.DataDriftTable;
import io.eigenmill.monitor.DriftCheck;
import io.eigenmill.monitor.DriftResult;
import io.eigenmill.monitor.DriftTable;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.monitor.ReconstructionResult;
import io.eigenmill.monitor.ScoreSample;
import io.eigenmill.monitor.ScoringStage;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.pca.FitTables;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.record.RunResult;
import io.eigenmill.report.HtmlReport;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Runs one job file end to end: plan (fails before reading data), compute, write every output into a staging
 * folder, then commit. Nothing appears under {@code output.path} unless the whole run succeeded. The command line,
 * spark-submit and the tests all come through here.
 *
 * <p>A job fits a model unless {@code apply.model} is set, in which case it applies that model. Either way it may
 * write scores with monitoring statistics, a reconstruction, a comparison with another model, and clusters.
 */
public final class JobRunner {
  private static final Logger LOG = LoggerFactory.getLogger(JobRunner.class);

  private JobRunner() {}

  public static JobPlan plan(SparkSession spark, JobSettings settings) {
    JobPlan plan = Planner.plan(spark, settings);
    if (settings.apply().appliesModel() && !settings.apply().compareWith().isEmpty()) {
      DriftCheck.refuseSelf(spark, settings.apply(), ModelStore.read(spark, "apply.model", settings.apply().model()),
          ModelStore.read(spark, "apply.compare-with", settings.apply().compareWith()));
    }
    return plan;
  }

  /**
   * Runs the job on a copy of {@code caller} that writes timestamps as Parquet TIMESTAMP (micros, UTC-adjusted)
   * ({@link WriterSession}); {@code caller}'s own settings are unchanged.
   */
  public static RunResult run(SparkSession caller, JobSettings settings) {
    long started = System.nanoTime();
    SparkSession spark = WriterSession.of(caller, settings.spark().conf());
    // every Parquet footer is read before anything else: an unreadable file fails the run here (exit 2, naming it)
    // or, with input.corrupt-files = skip, is left out and reported
    String skipped = InputFiles.check(spark, settings.input()).skipWarning();
    boolean applying = settings.apply().appliesModel();
    PcaModel applied = applying ? ModelStore.read(spark, "apply.model", settings.apply().model()) : null;
    PcaModel earlier = settings.apply().compareWith().isEmpty() ? null
        : ModelStore.read(spark, "apply.compare-with", settings.apply().compareWith());
    if (applying && earlier != null) {
      DriftCheck.refuseSelf(spark, settings.apply(), applied, earlier);
    }
    JobPlan plan = applying ? Planner.planApply(spark, settings, applied) : Planner.plan(spark, settings);
    OutputCommit out = OutputCommit.begin(spark, settings.output().path(), settings.output().mode());
    try {
      RunResult result = execute(spark, plan, applied, earlier, out, started, skipped);
      out.writeText("summary.json", SummaryJson.render(result));
      out.writeText("report.html", HtmlReport.render(result));
      out.commit();
      LOG.info("run: committed {}", out.finalPath());
      return result;
    } catch (RuntimeException | Error e) {
      out.abort();
      throw e;
    }
  }

  private static RunResult execute(SparkSession spark, JobPlan plan, PcaModel applied, PcaModel earlier,
      OutputCommit out, long started, String skipped) {
    JobSettings settings = plan.settings();
    Stopwatch clock = new Stopwatch();
    Map<String, Double> timings = new LinkedHashMap<>();
    // settings without effect (found by the reader and the planner) lead the run's warnings
    List<String> warnings = new ArrayList<>(plan.warnings());
    for (String w : plan.warnings()) {
      LOG.warn("settings: {}", w);
    }
    if (!skipped.isEmpty()) {
      warnings.add(skipped);
    }
    Dataset<Row> table = TableLoader.load(spark, settings.input());
    FitResult fit = null;
    PcaModel model = applied;
    if (model == null) {
      fit = new FitJob(spark, plan).execute(table);
      FitTables.write(spark, fit, out);
      model = fit.model();
      timings.putAll(fit.timings());
      warnings.addAll(fit.warnings());
      clock.lap("write-model");
    }
    ScoringStage scoring = new ScoringStage(spark, plan, model, out);
    MonitorResult monitor = null;
    ScoreSample sample = null;
    ScoringStage.Outcome scored = null;
    boolean labelling = !settings.apply().centroids().isEmpty();
    if (applied != null || settings.output().scores() || settings.cluster().enabled() || labelling) {
      scored = scoring.score(table, applied == null);
      monitor = scored.monitor();
      warnings.addAll(monitor.warnings());
      sample = scored.sample();
      clock.lap("score");
    }
    ClusterStage clustering = new ClusterStage(spark, plan, model, out);
    ClusterResult clusters = null;
    if (settings.cluster().enabled()) {
      ClusterOutcome outcome = clustering.cluster(table, scored);
      clusters = outcome.result();
      warnings.addAll(outcome.warnings());
      sample = clustering.colour(sample, outcome);
      clock.lap("cluster");
    }
    LabelResult labels = null;
    if (labelling) {
      labels = clustering.label(table, scored, settings.apply().centroids(), settings.apply().labelRows());
      LOG.info("labels: {} per saved cluster {}", labels.byEntity() ? labels.entity() + " values" : "rows",
          labels.sizes());
      clock.lap("label");
    }
    DataDriftResult dataDrift = scored == null ? null : scored.dataDrift();
    if (dataDrift != null) {
      DataDriftTable.write(spark, dataDrift, out.staged("data-drift"));
    }
    ReconstructionResult reconstruction = null;
    if (settings.output().reconstruction()) {
      reconstruction = scoring.reconstruct(table);
      clock.lap("reconstruct");
    }
    DriftResult drift = null;
    if (earlier != null) {
      drift = DriftCheck.compare(earlier, model, settings.apply().compareWith());
      DriftTable.write(spark, drift, out.staged("drift"));
      clock.lap("drift");
    }
    timings.putAll(clock.timings());
    return new RunResult(plan, fit, model, monitor, reconstruction, drift, clusters, sample, out.finalPath(), timings,
        warnings, (System.nanoTime() - started) / 1e9, dataDrift, labels);
  }
}
