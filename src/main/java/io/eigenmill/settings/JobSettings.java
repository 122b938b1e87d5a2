package io.eigenmill.settings;

import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.Choices.CorruptFiles;
import io.eigenmill.settings.Choices.InputFormat;
import io.eigenmill.settings.Choices.KSelection;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.Choices.MissingPolicy;
import io.eigenmill.settings.Choices.OutputMode;
import io.eigenmill.settings.Choices.Scaling;
import java.io.Serializable;
import java.util.List;
import java.util.Map;
import java.util.OptionalInt;

/**
 * A job file read once and validated: immutable, with every default already filled in from {@code reference.conf}.
 * Built only by {@link SettingsReader}.
 *
 * @param warnings settings given by the user that have no effect in this job, each naming the key, its value and
 *     why (shown by {@code plan}, logged by {@code run} and kept in the run's warnings)
 */
public record JobSettings(
    String name,
    String sourceFile,
    Input input,
    Features features,
    Prepare prepare,
    Reduce reduce,
    Monitor monitor,
    Apply apply,
    Cluster cluster,
    Output output,
    SparkSection spark,
    List<String> warnings) implements Serializable {

  /** Settings without warnings. */
  public JobSettings(String name, String sourceFile, Input input, Features features, Prepare prepare, Reduce reduce,
      Monitor monitor, Apply apply, Cluster cluster, Output output, SparkSection spark) {
    this(name, sourceFile, input, features, prepare, reduce, monitor, apply, cluster, output, spark, List.of());
  }

  /** These settings with {@code warnings} in place of theirs. */
  public JobSettings withWarnings(List<String> warnings) {
    return new JobSettings(name, sourceFile, input, features, prepare, reduce, monitor, apply, cluster, output, spark,
        List.copyOf(warnings));
  }

  /**
   * @param where a Spark SQL predicate over the input's columns; rows where it is true are the job's input (empty:
   *     every row). Applied by {@code io.TableLoader.load} before anything else.
   */
  public record Input(String path, InputFormat format, CorruptFiles corruptFiles, String where, String snapshots,
      Choices.InputLayout layout, LongLayout longLayout, String table, String asOf) implements Serializable {
    /** An input read from a folder ({@code input.path}) or a snapshot store, not a catalog table. */
    public Input(String path, InputFormat format, CorruptFiles corruptFiles, String where, String snapshots,
        Choices.InputLayout layout, LongLayout longLayout) {
      this(path, format, corruptFiles, where, snapshots, layout, longLayout, "", "");
    }

    /** True when the input is a catalog table ({@code input.table}) instead of a folder. */
    public boolean fromTable() {
      return table != null && !table.isBlank();
    }

    /** The folder or the table name: what the input is, for messages and records. */
    public String source() {
      return fromTable() ? table : path;
    }

    /** A wide input. */
    public Input(String path, InputFormat format, CorruptFiles corruptFiles, String where, String snapshots) {
      this(path, format, corruptFiles, where, snapshots, Choices.InputLayout.WIDE, null);
    }

    /** True when the table is long ({@code input.layout = long}) and the job pivots it. */
    public boolean isLong() {
      return layout == Choices.InputLayout.LONG;
    }

    /** This input without its row filter (the filter is applied elsewhere, e.g. before a pivot). */
    public Input withoutWhere() {
      return new Input(path, format, corruptFiles, "", snapshots, layout, longLayout, table, asOf);
    }

    /** An input without a row filter. */
    public Input(String path, InputFormat format, CorruptFiles corruptFiles) {
      this(path, format, corruptFiles, "");
    }

    /** A table input (not a snapshot store). */
    public Input(String path, InputFormat format, CorruptFiles corruptFiles, String where) {
      this(path, format, corruptFiles, where, "");
    }

    /** True when the job fits from a snapshot store ({@code input.snapshots}) instead of a table. */
    public boolean fromSnapshots() {
      return !snapshots.isBlank();
    }

    /** What the input is, for messages: {@code input.path = P} or {@code input.snapshots = P}. */
    public String named() {
      return fromSnapshots() ? "input.snapshots = " + snapshots : fromTable() ? "input.table = " + table
          : "input.path = " + path;
    }

    /** True when {@code input.where} is set (not blank). */
    public boolean filtered() {
      return !where.isBlank();
    }
  }

  /**
   * The columns of a long table ({@code input.long}).
   *
   * @param time the time column; empty: one row per entity
   * @param bucketMicros width of a time bucket in microseconds; 0: every distinct time is a row
   * @param maxMetrics most metric names a job discovers
   * @param minPresence a metric with a value in fewer than this share of the pivoted rows is dropped
   */
  public record LongLayout(List<String> entity, String time, String metric, String value, long bucketMicros,
      Choices.Aggregate aggregate, int maxMetrics, double minPresence) implements Serializable {
    public LongLayout {
      entity = List.copyOf(entity);
    }

    public boolean timed() {
      return !time.isBlank();
    }
  }

  public record Features(List<String> columns, List<String> exclude, List<String> keys) implements Serializable {}

  public record Prepare(Scaling scaling, MissingPolicy missing) implements Serializable {}

  /**
   * {@code components} empty means: choose k by {@code varianceTarget}, at most {@code maxComponents}.
   *
   * @param groupBy one model per value of these columns ({@code reduce.group-by}; empty: one model)
   * @param minGroupRows groups with fewer usable rows get no model ({@code reduce.min-group-rows}; empty: 10 x the
   *     features, see {@link #minGroupRows(int)})
   * @param randomizedTolerance {@code reduce.randomized.tolerance}: the accuracy bound the randomized method adds
   *     power iterations to reach
   * @param maxPowerIterations {@code reduce.randomized.max-power-iterations}: at most this many power iterations,
   *     at least {@code powerIterations}
   */
  public record Reduce(
      Method method,
      OptionalInt components,
      double varianceTarget,
      int maxComponents,
      int blockRows,
      int covarianceMaxFeatures,
      int oversample,
      int powerIterations,
      long seed,
      List<String> groupBy,
      OptionalInt minGroupRows,
      double randomizedTolerance,
      int maxPowerIterations) implements Serializable {

    public boolean grouped() {
      return !groupBy.isEmpty();
    }

    /**
     * The fewest usable rows a group needs for its own model with d features: {@code reduce.min-group-rows}, or
     * 10 d by default (a covariance of d features from fewer than about 10 d rows has eigenvalues far from the
     * population's: common practice, no source).
     */
    public long minGroupRows(int d) {
      return minGroupRows.isPresent() ? minGroupRows.getAsInt() : 10L * d;
    }
  }

  /** @param qLimit how the Q control limit is computed ({@code monitor.q-limit}) */
  public record Monitor(double confidence, Choices.QLimit qLimit) implements Serializable {}

  /** @param labelRows with entity centroids, also label each row ({@code apply.label-rows}) */
  public record Apply(String model, String compareWith, String centroids, boolean labelRows,
      Choices.UnknownGroup unknownGroup) implements Serializable {
    public Apply(String model, String compareWith, String centroids, boolean labelRows) {
      this(model, compareWith, centroids, labelRows, Choices.UnknownGroup.FLAG);
    }

    public boolean appliesModel() {
      return !model.isEmpty();
    }
  }

  /** {@code k} empty means: choose k from {@code kMin..kMax} by {@code selectBy}. */
  public record Cluster(
      boolean enabled,
      ClusterSpace space,
      OptionalInt k,
      int kMin,
      int kMax,
      KSelection selectBy,
      int restarts,
      int maxIterations,
      double tolerance,
      int silhouetteSample,
      int initSample,
      long seed,
      String entity,
      boolean entitySpread,
      int restartsAtBest,
      int maxRestarts) implements Serializable {}

  /**
   * @param snapshots a snapshot store the fit also writes its moments to, one snapshot per value of
   *     {@code snapshotsBy} ({@code output.snapshots}; empty: none)
   * @param snapshotsBy the key columns of the snapshots ({@code snapshots.by}; empty: the input's partition columns)
   * @param tablePrefix the row outputs are also written as catalog tables named this prefix and the output's name
   *     ({@code output.table-prefix}, e.g. {@code catalog.db.fleet_}; empty: no tables)
   * @param tableMode how those tables are written ({@code output.table-mode})
   */
  public record Output(
      String path, OutputMode mode, boolean scores, boolean reconstruction, int reportSample, String snapshots,
      List<String> snapshotsBy, String tablePrefix, Choices.TableMode tableMode) implements Serializable {
    public Output(String path, OutputMode mode, boolean scores, boolean reconstruction, int reportSample) {
      this(path, mode, scores, reconstruction, reportSample, "", List.of());
    }

    /** An output without catalog tables. */
    public Output(String path, OutputMode mode, boolean scores, boolean reconstruction, int reportSample,
        String snapshots, List<String> snapshotsBy) {
      this(path, mode, scores, reconstruction, reportSample, snapshots, snapshotsBy, "",
          Choices.TableMode.FAIL_IF_EXISTS);
    }

    /** True when the row outputs are also written as catalog tables ({@code output.table-prefix}). */
    public boolean writesTables() {
      return !tablePrefix.isBlank();
    }

    public boolean writesSnapshots() {
      return !snapshots.isBlank();
    }
  }

  public record SparkSection(String master, Map<String, String> conf) implements Serializable {}
}
