package io.eigenmill.run;

import io.eigenmill.engine.BlasThreads;
import io.eigenmill.engine.Stopwatch;
import io.eigenmill.engine.KeyColumns;
import io.eigenmill.io.GroupModels;
import io.eigenmill.io.InputFiles;
import io.eigenmill.io.InputFilter;
import io.eigenmill.io.LongTable;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.SnapshotStore;
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
import io.eigenmill.monitor.ReconstructionResult;
import io.eigenmill.monitor.ScoreSample;
import io.eigenmill.monitor.ScoringStage;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.pca.FitTables;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.record.RunResult;
import io.eigenmill.record.SummaryJson;
import io.eigenmill.report.HtmlReport;
import io.eigenmill.settings.InvalidJobException;
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
    return run(caller, settings, Map.of());
  }

  /**
   * Runs the job as {@link #run(SparkSession, JobSettings)} does; {@code before} holds the timings of what the
   * caller did first (reading the settings, starting Spark), which lead the run's {@code timings_seconds}. Every
   * step of the run is timed after them: session (the writer session), check-input (every footer read),
   * open-models (apply jobs), open-input, planning, the fit's or the scoring's own steps, write-model, report and
   * summary; the commit, which follows the summary, is logged.
   */
  public static RunResult run(SparkSession caller, JobSettings settings, Map<String, Double> before) {
    return run(caller, settings, before, null);
  }

  /**
   * Runs the job over {@code given}, a table the caller already holds, in place of {@code input.path} (the Java
   * API). {@code input.where} still applies to it; no file is opened for the input.
   */
  public static RunResult run(SparkSession caller, JobSettings settings, Dataset<Row> given) {
    return run(caller, settings, Map.of(), given);
  }

  private static RunResult run(SparkSession caller, JobSettings settings, Map<String, Double> before,
      Dataset<Row> given) {
    long started = System.nanoTime();
    Stopwatch clock = new Stopwatch();
    SparkSession spark = WriterSession.of(caller, settings.spark().conf());
    clock.lap("session");
    // every Parquet footer is read before anything else: an unreadable file fails the run here (exit 2, naming it)
    // or, with input.corrupt-files = skip, is left out and reported
    String skipped = settings.input().fromSnapshots() || given != null ? ""
        : InputFiles.check(spark, settings.input()).skipWarning();
    clock.lap("check-input");
    // a store path that is not a store fails here, before any work (an absent or empty folder becomes a store)
    SnapshotStore store = settings.output().writesSnapshots() ? SnapshotStore.open(
        spark.sparkContext().hadoopConfiguration(), "output.snapshots", settings.output().snapshots(), true) : null;
    boolean applying = settings.apply().appliesModel();
    GroupModels groups = applying && ModelStore.grouped(spark, "apply.model", settings.apply().model())
        ? ModelStore.readGroups(spark, "apply.model", settings.apply().model()) : null;
    PcaModel applied = !applying ? null : groups != null ? Planner.unionModel(groups)
        : ModelStore.read(spark, "apply.model", settings.apply().model());
    PcaModel earlier = settings.apply().compareWith().isEmpty() ? null
        : ModelStore.read(spark, "apply.compare-with", settings.apply().compareWith());
    if (applying && earlier != null && groups == null) {
      DriftCheck.refuseSelf(spark, settings.apply(), applied, earlier);
    }
    if (applying || earlier != null || store != null) {
      clock.lap("open-models");
    }
    // a fit or an apply of one model lists the input and infers its schema once: the planner and the passes share
    // the table as read
    Dataset<Row> opened = given != null && groups == null ? given
        : groups != null || settings.input().fromSnapshots() || settings.input().isLong() ? null
        : TableLoader.read(spark, settings.input());
    if (opened != null) {
      clock.lap("open-input");
    }
    JobPlan plan = groups != null ? Planner.planApplyGroups(spark, settings, groups)
        : applying ? (opened != null ? Planner.planApply(spark, settings, applied, opened)
            : Planner.planApply(spark, settings, applied))
        : opened != null ? Planner.plan(spark, settings, opened) : Planner.plan(spark, settings);
    RowTables.refuseExisting(spark, settings);
    OutputCommit out = OutputCommit.begin(spark, settings.output().path(), settings.output().mode());
    clock.lap("planning");
    Map<String, Double> first = new LinkedHashMap<>(before);
    first.putAll(clock.timings());
    try {
      RunResult result = execute(spark, plan, applied, groups, earlier, out, started, skipped, first, opened);
      clock.restart();
      if (result.plan().longInput() != null) {
        out.delete(LongTable.STAGING);
        out.writeText(LongTable.MAPPING_FILE, LongTable.mappingCsv(result.plan().longInput()));
      }
      out.writeText("report.html", HtmlReport.render(result));
      clock.lap("report");
      // the catalog tables last, once every folder output is staged: a failed run leaves them as they were
      var tables = RowTables.write(spark, result.plan(), out);
      var tableSummary = RowTables.summary(tables);
      if (settings.output().writesTables()) {
        clock.lap("tables");
      }
      // the run's timings map (built by execute for this run) takes the steps after it; the summary is rendered
      // twice so that the one written carries the time of the first rendering
      SummaryJson.render(result, tableSummary);
      clock.lap("summary");
      for (String step : List.of("report", "tables", "summary")) {
        Double seconds = clock.timings().get(step);
        if (seconds != null) {
          result.timings().put(step, seconds);
        }
      }
      out.writeText("summary.json", SummaryJson.render(result, tableSummary));
      clock.restart();
      commitSnapshots(store, result);
      out.commit();
      clock.lap("commit");
      LOG.info("run: committed {} (commit {} s)", out.finalPath(),
          String.format(java.util.Locale.ROOT, "%.3f", clock.timings().get("commit")));
      return result;
    } catch (RuntimeException | Error e) {
      out.abort();
      throw e;
    }
  }

  /**
   * Commits the snapshots a fit wrote, once every other output is staged: the store gets all of them or none
   * ({@link SnapshotStore#commit}); the output folder is committed after it.
   */
  private static void commitSnapshots(SnapshotStore store, RunResult result) {
    if (store == null || result.fit() == null || result.fit().snapshots() == null) {
      return;
    }
    var pending = result.fit().snapshots().pending();
    store.commit(pending);
    LOG.info("run: {} snapshot{} committed to {}", pending.size(), pending.size() == 1 ? "" : "s", store.path());
  }

  /** The plan of a run over a table the caller gave: a fit's or an apply's, as for a table read from a path. */
  public static JobPlan planGiven(SparkSession spark, JobSettings settings, PcaModel applied, Dataset<Row> given) {
    return applied != null ? Planner.planApply(spark, settings, applied, given) : Planner.plan(spark, settings, given);
  }

  private static RunResult execute(SparkSession spark, JobPlan plan, PcaModel applied, GroupModels groups,
      PcaModel earlier, OutputCommit out, long started, String skipped, Map<String, Double> first,
      Dataset<Row> opened) {
    Dataset<Row> table;
    if (plan.longInput() != null) {
      // the long table is pivoted once into the staging folder; every pass then reads it as a wide Parquet table
      LongTable.Staged staged = plan.longInput().stage(spark, out.staged(LongTable.STAGING));
      plan = Planner.afterPivot(plan, staged);
      table = staged.table();
      LOG.info("run: pivoted {} long rows into {} rows of {} metrics in {} s", staged.view().pivoted().longRows(),
          staged.view().pivoted().rows(), staged.view().metrics().size(),
          String.format(java.util.Locale.ROOT, "%.1f", staged.view().pivoted().seconds()));
    } else {
      table = plan.settings().input().fromSnapshots() ? null : opened != null
          ? InputFilter.apply(opened, plan.settings().input()) : TableLoader.load(spark, plan.settings().input());
    }
    Steps run = new Steps(spark, plan, out, skipped);
    run.first.putAll(first);
    run.appliedGroups = groups;
    FitResult fit = applied == null ? run.fit(table) : null;
    PcaModel model = fit == null ? applied : fit.model();
    ScoringStage scoring = new ScoringStage(spark, plan, model, out);
    ScoringStage.Outcome scored = run.score(scoring, table, applied != null);
    ClusterStage clustering = new ClusterStage(spark, plan, model, out);
    ClusterResult clusters = run.cluster(clustering, table, scored);
    LabelResult labels = run.label(clustering, table, scored);
    DataDriftResult dataDrift = run.writeDataDrift(scored);
    ReconstructionResult reconstruction = run.reconstruct(scoring, table);
    DriftResult drift = run.drift(earlier, model);
    return new RunResult(plan, fit, model, scored == null ? null : scored.monitor(), reconstruction, drift, clusters,
        run.sample, out.finalPath(), run.timings(), run.warnings, (System.nanoTime() - started) / 1e9, dataDrift,
        labels, groups);
  }

  /**
   * The steps of a run after the plan, in order: fit (unless applying), score, cluster, label, data drift,
   * reconstruct, drift. Each step that runs adds its timing (write-model, score, cluster, label, reconstruct,
   * drift) and its warnings, after the settings' own.
   */
  private static final class Steps {
    private final SparkSession spark;
    private final JobPlan plan;
    private final JobSettings settings;
    private final OutputCommit out;
    private final Stopwatch clock = new Stopwatch();
    private final Map<String, Double> fitTimings = new LinkedHashMap<>();
    /** The timings of the steps before this one (settings, Spark start, session, input check, planning). */
    private final Map<String, Double> first = new LinkedHashMap<>();
    private final List<String> warnings;
    private ScoreSample sample;
    private GroupModels appliedGroups;
    private FitResult fitted;

    Steps(SparkSession spark, JobPlan plan, OutputCommit out, String skipped) {
      this.spark = spark;
      this.plan = plan;
      this.settings = plan.settings();
      this.out = out;
      // settings without effect (found by the reader and the planner) lead the run's warnings
      this.warnings = new ArrayList<>(plan.warnings());
      for (String w : plan.warnings()) {
        LOG.warn("settings: {}", w);
      }
      if (!skipped.isEmpty()) {
        warnings.add(skipped);
      }
      String blas = BlasThreads.warning(spark);
      if (blas != null) {
        LOG.warn("{}", blas);
        warnings.add(blas);
      }
    }

    FitResult fit(Dataset<Row> table) {
      clock.restart();
      FitResult fit = new FitJob(spark, plan).execute(table);
      fitted = fit;
      // the fit's own stages are in its timings: write-model is the writing of the model's tables alone
      clock.restart();
      FitTables.write(spark, fit, out);
      fitTimings.putAll(fit.timings());
      warnings.addAll(fit.warnings());
      clock.lap("write-model");
      return fit;
    }

    /** Scores when an output needs them: an apply job, output.scores, clustering or labelling; else null. */
    ScoringStage.Outcome score(ScoringStage scoring, Dataset<Row> table, boolean applying) {
      boolean labelling = !settings.apply().centroids().isEmpty();
      if (!applying && !settings.output().scores() && !settings.cluster().enabled() && !labelling) {
        return null;
      }
      ScoringStage.Outcome scored;
      if (appliedGroups != null) {
        scored = scoring.scoreGroups(table, new KeyColumns(appliedGroups.columns(), appliedGroups.types(),
            spark.conf().get("spark.sql.session.timeZone")), appliedGroups.models(), plan.features(), false);
      } else if (fitted != null && fitted.groups() != null) {
        scored = scoring.scoreGroups(table, fitted.groups().by(), fitted.groups().models(), plan.features(), true);
      } else {
        scored = scoring.score(table, !applying);
      }
      var input = settings.input();
      if (applying && input.filtered() && scored.monitor().rowsScored() == 0) {
        throw new InvalidJobException("input.where = \"" + input.where() + "\" selects no rows of input.path = "
            + input.source() + " (nothing to score)");
      }
      warnings.addAll(scored.monitor().warnings());
      sample = scored.sample();
      clock.lap("score");
      return scored;
    }

    ClusterResult cluster(ClusterStage clustering, Dataset<Row> table, ScoringStage.Outcome scored) {
      if (!settings.cluster().enabled()) {
        return null;
      }
      ClusterOutcome outcome = clustering.cluster(table, scored);
      warnings.addAll(outcome.warnings());
      sample = clustering.colour(sample, outcome);
      clock.lap("cluster");
      return outcome.result();
    }

    LabelResult label(ClusterStage clustering, Dataset<Row> table, ScoringStage.Outcome scored) {
      if (settings.apply().centroids().isEmpty()) {
        return null;
      }
      LabelResult labels = clustering.label(table, scored, settings.apply().centroids(),
          settings.apply().labelRows());
      LOG.info("labels: {} per saved cluster {}", labels.byEntity() ? labels.entity() + " values" : "rows",
          labels.sizes());
      clock.lap("label");
      return labels;
    }

    DataDriftResult writeDataDrift(ScoringStage.Outcome scored) {
      DataDriftResult dataDrift = scored == null ? null : scored.dataDrift();
      if (dataDrift != null) {
        DataDriftTable.write(spark, dataDrift, out.staged("data-drift"));
      }
      return dataDrift;
    }

    ReconstructionResult reconstruct(ScoringStage scoring, Dataset<Row> table) {
      if (!settings.output().reconstruction()) {
        return null;
      }
      ReconstructionResult reconstruction = scoring.reconstruct(table);
      clock.lap("reconstruct");
      return reconstruction;
    }

    DriftResult drift(PcaModel earlier, PcaModel model) {
      if (earlier == null) {
        return null;
      }
      DriftResult drift = DriftCheck.compare(earlier, model, settings.apply().compareWith());
      DriftTable.write(spark, drift, out.staged("drift"));
      clock.lap("drift");
      return drift;
    }

    /** The fit's own timings, then the run's steps. */
    Map<String, Double> timings() {
      Map<String, Double> timings = new LinkedHashMap<>(first);
      if (plan.longInput() != null && plan.longInput().pivoted() != null) {
        timings.put("pivot", plan.longInput().pivoted().seconds());
      }
      timings.putAll(fitTimings);
      timings.putAll(clock.timings());
      return timings;
    }
  }
}
