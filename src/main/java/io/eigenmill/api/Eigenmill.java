package io.eigenmill.api;

import com.typesafe.config.Config;
import com.typesafe.config.ConfigException;
import com.typesafe.config.ConfigFactory;
import io.eigenmill.io.InputFilter;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.TableLoader;
import io.eigenmill.monitor.ScoringPass;
import io.eigenmill.monitor.ScoringStage;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Comparator;
import java.util.List;
import java.util.stream.Stream;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/**
 * The jobs, called from Java with a DataFrame the caller already holds: the same code as the command line
 * ({@link JobRunner}), with the given Dataset in place of {@code input.path}.
 *
 * <p>Settings are the job file's HOCON (a {@code String}, read as the command line reads a job file, with every
 * default from {@code reference.conf}), or {@link JobSettings} made by {@link #settings}. {@code input.path} is not
 * needed (and ignored when set: the Dataset is the input); {@code input.where} still filters it.
 *
 * <p>Written or lazy, by {@code output.path}: set, the job writes and commits its folder exactly as the command line
 * does, and the result's Datasets read the written tables; not set, nothing is written, and a fit's or an apply's
 * scores come back as a Dataset that is computed only when the caller acts on it. Clustering always writes (k-means
 * must run to assign a row), so {@link #cluster} needs {@code output.path}; so do the outputs only a written run
 * has (reconstruction, model comparison, saved centroids, one model per group).
 *
 * <p>Bad settings or input throw {@link InvalidJobException}, with the command line's messages (naming the
 * setting or column, the value and the rule).
 */
public final class Eigenmill {
  /** The {@code output.path} of lazy mode: {@link #settings} sets it when the HOCON has no {@code output.path}. */
  public static final String LAZY = "(lazy: not written)";

  private Eigenmill() {}

  /** Fits a model to {@code input}; with {@code output.path}, writes what the command line writes. */
  public static JobResult fit(SparkSession spark, Dataset<Row> input, String hocon) {
    return fit(spark, input, settings(hocon));
  }

  /** Fits a model to {@code input}; {@code apply.model} must not be set (see {@link #apply}). */
  public static JobResult fit(SparkSession spark, Dataset<Row> input, JobSettings settings) {
    JobSettings s = given(settings);
    if (s.apply().appliesModel()) {
      throw new InvalidJobException("apply.model = " + s.apply().model() + ": Eigenmill.fit fits a model; call"
          + " Eigenmill.apply to apply a saved one");
    }
    if (written(s)) {
      return written(spark, JobRunner.run(spark, s, input), true);
    }
    refuseInLazyMode(s);
    if (s.reduce().grouped()) {
      throw lazyOnly("reduce.group-by = " + s.reduce().groupBy());
    }
    return lazyFit(spark, input, s);
  }

  /** Applies the model at {@code apply.model} (a fit's output folder or its {@code model/}) to {@code input}. */
  public static JobResult apply(SparkSession spark, Dataset<Row> input, String hocon) {
    return apply(spark, input, settings(hocon));
  }

  /**
   * Applies the model at {@code apply.model} to {@code input}: the location comes from the settings, as on the
   * command line (a fit called through this class leaves its model there when it has {@code output.path}).
   */
  public static JobResult apply(SparkSession spark, Dataset<Row> input, JobSettings settings) {
    JobSettings s = given(settings);
    if (!s.apply().appliesModel()) {
      throw new InvalidJobException("apply.model is not set: Eigenmill.apply needs the folder of a saved model"
          + " (a fit's output.path); call Eigenmill.fit to fit one");
    }
    if (written(s)) {
      return written(spark, JobRunner.run(spark, s, input), false);
    }
    refuseInLazyMode(s);
    if (!s.apply().compareWith().isEmpty()) {
      throw lazyOnly("apply.compare-with = " + s.apply().compareWith());
    }
    if (!s.apply().centroids().isEmpty()) {
      throw lazyOnly("apply.centroids = " + s.apply().centroids());
    }
    if (ModelStore.grouped(spark, "apply.model", s.apply().model())) {
      throw lazyOnly("apply.model = " + s.apply().model() + " (one model per group)");
    }
    PcaModel model = ModelStore.read(spark, "apply.model", s.apply().model());
    JobPlan plan = JobRunner.planGiven(spark, s, model, input);
    ScoringPass.Limits limits = ScoringPass.Limits.of(model, s.monitor(), false);
    Dataset<Row> scores = new ScoringStage(spark, plan, model, null)
        .lazyScores(InputFilter.apply(input, s.input()), false);
    return new JobResult(null, Model.of(model), limits.t2(), limits.q(), scores, null, null);
  }

  /** Clusters {@code input} (fitting a model first, or applying {@code apply.model}); needs {@code output.path}. */
  public static JobResult cluster(SparkSession spark, Dataset<Row> input, String hocon) {
    return cluster(spark, input, settings(hocon.isBlank() || hasPath(hocon, "cluster.enabled") ? hocon
        : hocon + "\ncluster.enabled = true\n"));
  }

  /**
   * Clusters {@code input} with k-means ({@code cluster.*}); {@code cluster.enabled} must be true (the HOCON
   * overload sets it when the text does not) and {@code output.path} set.
   */
  public static JobResult cluster(SparkSession spark, Dataset<Row> input, JobSettings settings) {
    JobSettings s = given(settings);
    if (!s.cluster().enabled()) {
      throw new InvalidJobException("cluster.enabled = false: Eigenmill.cluster needs cluster.enabled = true");
    }
    if (!written(s)) {
      throw new InvalidJobException("output.path is not set: Eigenmill.cluster writes its outputs (k-means runs"
          + " to assign the rows); set output.path");
    }
    return written(spark, JobRunner.run(spark, s, input), !s.apply().appliesModel());
  }

  /**
   * Reads job settings from HOCON as the command line reads a job file, for a run over a given Dataset: without
   * {@code input.path} the input is named {@value TableLoader#GIVEN} in messages, and without {@code output.path}
   * the job runs in lazy mode ({@link #LAZY}).
   */
  public static JobSettings settings(String hocon) {
    String text = hocon;
    if (!hasPath(hocon, "input.path") && !hasPath(hocon, "input.snapshots")) {
      text += "\ninput.path = \"" + TableLoader.GIVEN + "\"\n";
    }
    if (!hasPath(hocon, "output.path")) {
      text += "\noutput.path = \"" + LAZY + "\"\n";
    }
    return new SettingsReader().readString(text, List.of(), "job");
  }

  private static boolean hasPath(String hocon, String key) {
    try {
      Config c = ConfigFactory.parseString(hocon);
      return c.hasPath(key);
    } catch (ConfigException e) {
      return true; // the reader reports the syntax error with its line
    }
  }

  /** The settings with the given Dataset as input. */
  private static JobSettings given(JobSettings s) {
    JobSettings.Input in = s.input();
    if (!in.fromSnapshots() && in.isLong()) {
      throw new InvalidJobException("input.layout = long: a Dataset given through the Java API is read as a wide"
          + " table; pivot it first or give the long table as input.path on the command line");
    }
    if (in.fromSnapshots()) {
      throw new InvalidJobException("input.snapshots = " + in.snapshots() + ": a job over a given Dataset reads"
          + " the Dataset; remove input.snapshots");
    }
    var input = new JobSettings.Input(TableLoader.GIVEN, in.format(), in.corruptFiles(), in.where(), in.snapshots(),
        in.layout(), in.longLayout());
    return new JobSettings(s.name(), s.sourceFile(), input, s.features(), s.prepare(), s.reduce(), s.monitor(),
        s.apply(), s.cluster(), s.output(), s.spark(), s.warnings());
  }

  private static boolean written(JobSettings s) {
    return !LAZY.equals(s.output().path());
  }

  private static void refuseInLazyMode(JobSettings s) {
    if (s.cluster().enabled()) {
      throw lazyOnly("cluster.enabled = true");
    }
    if (s.output().reconstruction()) {
      throw lazyOnly("output.reconstruction = true");
    }
    if (s.output().writesSnapshots()) {
      throw lazyOnly("output.snapshots = " + s.output().snapshots());
    }
  }

  private static InvalidJobException lazyOnly(String setting) {
    return new InvalidJobException(setting + " needs output.path: without it the Java API runs in lazy mode,"
        + " which returns the scores only; set output.path to write the job's outputs");
  }

  private static JobResult written(SparkSession spark, RunResult run, boolean fittedRows) {
    String out = run.outputPath();
    // scores/ is written exactly when the run scored (monitor record)
    Dataset<Row> scores = run.monitor() != null ? spark.read().parquet(out + "/scores") : null;
    Dataset<Row> clusters = run.clusters() == null ? null : spark.read().parquet(out + "/clusters/assignments");
    double t2 = Double.NaN;
    double q = Double.NaN;
    if (run.monitor() != null) {
      t2 = run.monitor().t2Limit();
      q = run.monitor().qLimit();
    } else if (run.appliedGroups() == null && (run.fit() == null || run.fit().groups() == null)) {
      ScoringPass.Limits limits = ScoringPass.Limits.of(run.model(), run.plan().settings().monitor(), fittedRows);
      t2 = limits.t2();
      q = limits.q();
    }
    return new JobResult(run, Model.of(run.model()), t2, q, scores, clusters, out);
  }

  /**
   * A fit without output.path: the runner fits into a scratch folder (model tables and summary, no scores), which is
   * deleted before returning; the scores are the scoring pass over the given rows, not run until the caller acts.
   */
  private static JobResult lazyFit(SparkSession spark, Dataset<Row> input, JobSettings s) {
    Path scratch;
    try {
      scratch = Files.createTempDirectory("eigenmill-api-");
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
    try {
      JobSettings.Output o = s.output();
      var output = new JobSettings.Output(scratch.resolve("run").toString(), o.mode(), false, false,
          o.reportSample(), o.snapshots(), o.snapshotsBy());
      JobSettings runSettings = new JobSettings(s.name(), s.sourceFile(), s.input(), s.features(), s.prepare(),
          s.reduce(), s.monitor(), s.apply(), s.cluster(), output, s.spark(), s.warnings());
      RunResult run = JobRunner.run(spark, runSettings, input);
      ScoringPass.Limits limits = ScoringPass.Limits.of(run.model(), s.monitor(), true);
      Dataset<Row> scores = new ScoringStage(spark, run.plan(), run.model(), null)
          .lazyScores(InputFilter.apply(input, s.input()), true);
      return new JobResult(run, Model.of(run.model()), limits.t2(), limits.q(), scores, null, null);
    } finally {
      delete(scratch);
    }
  }

  private static void delete(Path dir) {
    try (Stream<Path> files = Files.walk(dir)) {
      files.sorted(Comparator.reverseOrder()).forEach(p -> p.toFile().delete());
    } catch (IOException e) {
      // a scratch folder left in the temporary directory is harmless
    }
  }
}
