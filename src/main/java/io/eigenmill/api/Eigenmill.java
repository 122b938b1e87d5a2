package io.eigenmill.api;

import com.typesafe.config.Config;
import com.typesafe.config.ConfigException;
import com.typesafe.config.ConfigFactory;
import io.eigenmill.io.TableLoader;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.GivenRuns;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.util.List;
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
    return lazy(GivenRuns.fit(spark, s, input));
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
    if (GivenRuns.groupedModel(spark, s)) {
      throw lazyOnly("apply.model = " + s.apply().model() + " (one model per group)");
    }
    return lazy(GivenRuns.apply(spark, s, input));
  }

  /** Clusters {@code input} (fitting a model first, or applying {@code apply.model}); needs {@code output.path}. */
  public static JobResult cluster(SparkSession spark, Dataset<Row> input, String hocon) {
    return cluster(spark, input, settings(hasPath(hocon, "cluster.enabled") ? hocon
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
    // scores/ is written exactly when the run scored (its monitoring record)
    Dataset<Row> scores = run.monitor() != null ? spark.read().parquet(out + "/scores") : null;
    Dataset<Row> clusters = run.clusters() == null ? null : spark.read().parquet(out + "/clusters/assignments");
    double[] limits = GivenRuns.limits(run, fittedRows);
    return new JobResult(run, Model.of(run.model()), limits[0], limits[1], scores, clusters, out);
  }

  private static JobResult lazy(GivenRuns.Lazy lazy) {
    return new JobResult(lazy.run(), Model.of(lazy.model()), lazy.t2Limit(), lazy.qLimit(), lazy.scores(), null,
        null);
  }
}
