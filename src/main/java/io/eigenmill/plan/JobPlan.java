package io.eigenmill.plan;

import io.eigenmill.io.LongTable;
import io.eigenmill.math.BlockBudget;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.JobSettings;
import java.util.List;

/**
 * What a job will do, resolved against the input's schema before any data is read: the feature columns in order,
 * the keys, the method and why, memory, and the outputs. {@code plan} prints it; {@code run} executes it.
 *
 * @param rowEstimate rows counted from Parquet footers, or -1 when not cheap to know
 * @param notes things the user should know that are not errors (columns skipped by a glob, ...)
 * @param warnings settings that have no effect in this job, as the user should change them (the settings' own
 *     warnings, then those found against the schema); a run keeps them among its warnings
 * @param selection what {@code input.where} keeps of the input, or null when it is unset (or the input is long)
 * @param longInput the long table and its pivot, or null for a wide input
 * @param tableRead what is read of a catalog table ({@code input.table}), or null for a folder
 * @param splits how the input's scan is cut into splits and why ({@link ScanSplits}), or null when not planned
 */
public record JobPlan(
    JobSettings settings,
    String kind,
    List<String> features,
    List<String> featureTypes,
    List<String> keys,
    List<String> partitionColumns,
    long rowEstimate,
    long inputBytes,
    Method method,
    String methodReason,
    MemoryEstimate memory,
    List<String> outputs,
    List<String> notes,
    List<String> warnings,
    InputSelection selection,
    SnapshotPlan snapshots,
    GroupPlan groups,
    LongTable.View longInput,
    TableRead tableRead,
    ScanSplits splits) {

  /** A plan without planned splits (see {@link #withSplits}). */
  public JobPlan(JobSettings settings, String kind, List<String> features, List<String> featureTypes,
      List<String> keys, List<String> partitionColumns, long rowEstimate, long inputBytes, Method method,
      String methodReason, MemoryEstimate memory, List<String> outputs, List<String> notes, List<String> warnings,
      InputSelection selection, SnapshotPlan snapshots, GroupPlan groups, LongTable.View longInput,
      TableRead tableRead) {
    this(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes, method,
        methodReason, memory, outputs, notes, warnings, selection, snapshots, groups, longInput, tableRead, null);
  }

  /** This plan with its input's scan cut as {@code s} says. */
  public JobPlan withSplits(ScanSplits s) {
    return new JobPlan(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes,
        method, methodReason, memory, outputs, notes, warnings, selection, snapshots, groups, longInput, tableRead,
        s);
  }

  /** The split size the engine applies to the input's scan ({@link ScanSplits#applied}); 0: Spark's own. */
  public long splitBytes() {
    return splits == null ? 0 : splits.applied();
  }

  /** A plan of a folder input (or a table's before its facts are added, {@link #withTableRead}). */
  public JobPlan(JobSettings settings, String kind, List<String> features, List<String> featureTypes,
      List<String> keys, List<String> partitionColumns, long rowEstimate, long inputBytes, Method method,
      String methodReason, MemoryEstimate memory, List<String> outputs, List<String> notes, List<String> warnings,
      InputSelection selection, SnapshotPlan snapshots, GroupPlan groups, LongTable.View longInput) {
    this(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes, method,
        methodReason, memory, outputs, notes, warnings, selection, snapshots, groups, longInput, null);
  }

  /** This plan reading the catalog table described by {@code read}. */
  public JobPlan withTableRead(TableRead read) {
    return new JobPlan(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes,
        method, methodReason, memory, outputs, notes, warnings, selection, snapshots, groups, longInput, read,
        splits);
  }

  /** A plan of a wide input. */
  public JobPlan(JobSettings settings, String kind, List<String> features, List<String> featureTypes,
      List<String> keys, List<String> partitionColumns, long rowEstimate, long inputBytes, Method method,
      String methodReason, MemoryEstimate memory, List<String> outputs, List<String> notes, List<String> warnings,
      InputSelection selection, SnapshotPlan snapshots, GroupPlan groups) {
    this(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes, method,
        methodReason, memory, outputs, notes, warnings, selection, snapshots, groups, null);
  }

  /**
   * This plan reading the long table {@code view} (pivoted by the run); its partition columns are those the pivot
   * carries as keys.
   */
  public JobPlan withLongInput(LongTable.View view) {
    return new JobPlan(settings, kind, features, featureTypes, keys, view.carried(), rowEstimate, inputBytes,
        method, methodReason, memory, outputs, notes, warnings, selection, snapshots, groups, view, null, splits);
  }

  /** A plan without groups. */
  public JobPlan(JobSettings settings, String kind, List<String> features, List<String> featureTypes,
      List<String> keys, List<String> partitionColumns, long rowEstimate, long inputBytes, Method method,
      String methodReason, MemoryEstimate memory, List<String> outputs, List<String> notes, List<String> warnings,
      InputSelection selection, SnapshotPlan snapshots) {
    this(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes, method,
        methodReason, memory, outputs, notes, warnings, selection, snapshots, null);
  }

  /** A plan without a snapshot store. */
  public JobPlan(JobSettings settings, String kind, List<String> features, List<String> featureTypes,
      List<String> keys, List<String> partitionColumns, long rowEstimate, long inputBytes, Method method,
      String methodReason, MemoryEstimate memory, List<String> outputs, List<String> notes, List<String> warnings,
      InputSelection selection) {
    this(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes, method,
        methodReason, memory, outputs, notes, warnings, selection, null);
  }

  /** A plan of an unfiltered input. */
  public JobPlan(JobSettings settings, String kind, List<String> features, List<String> featureTypes,
      List<String> keys, List<String> partitionColumns, long rowEstimate, long inputBytes, Method method,
      String methodReason, MemoryEstimate memory, List<String> outputs, List<String> notes, List<String> warnings) {
    this(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes, method,
        methodReason, memory, outputs, notes, warnings, null);
  }

  /** A plan without warnings. */
  public JobPlan(JobSettings settings, String kind, List<String> features, List<String> featureTypes,
      List<String> keys, List<String> partitionColumns, long rowEstimate, long inputBytes, Method method,
      String methodReason, MemoryEstimate memory, List<String> outputs, List<String> notes) {
    this(settings, kind, features, featureTypes, keys, partitionColumns, rowEstimate, inputBytes, method,
        methodReason, memory, outputs, notes, List.of());
  }

  public int d() {
    return features.size();
  }

  /** The plan as the text {@code eigenmill plan} prints. */
  public String describe() {
    StringBuilder s = new StringBuilder();
    JobSettings j = settings;
    line(s, "job", j.name() + " (" + kind + ", from " + j.sourceFile() + ")");
    String rows = rowEstimate >= 0 ? ", " + String.format(java.util.Locale.ROOT, "%,d", rowEstimate) + " rows ("
        + (j.input().fromSnapshots() ? "in the selected snapshots" : tableRead != null && tableRead.rows() >= 0
        ? "table metadata" : "footers" + (selection != null ? ", kept files" : "")) + ")" : ", rows not counted";
    line(s, "input", (j.input().fromSnapshots() ? "snapshot store " + j.input().snapshots()
        + (j.input().filtered() ? " where " + j.input().where() : "") : (j.input().fromTable() ? "table "
        + j.input().source() : j.input().path() + " [" + j.input().format().word() + "]")
        + (inputBytes >= 0 ? ", " + MemoryEstimate.human(inputBytes) : "")) + rows);
    if (tableRead != null) {
      for (String[] l : tableRead.describe()) {
        line(s, l[0], l[1]);
      }
    }
    if (!partitionColumns.isEmpty()) {
      line(s, "partitioned by", String.join(", ", partitionColumns));
    }
    if (longInput != null) {
      describeLong(s, j);
    }
    if (selection != null) {
      for (String[] l : selection.describe()) {
        line(s, l[0], l[1]);
      }
    }
    if (snapshots != null) {
      for (String[] l : snapshots.describe()) {
        line(s, l[0], l[1]);
      }
    }
    if (groups != null) {
      for (String[] l : groups.describe(d())) {
        line(s, l[0], l[1]);
      }
    }
    if (splits != null) {
      line(s, "splits", splits.line());
    }
    line(s, "features (" + features.size() + ")", describeFeatures());
    line(s, "keys", keys.isEmpty() ? "(none)" : String.join(", ", keys));
    line(s, "missing values", j.prepare().missing().word());
    if (kind.equals("apply")) {
      // an apply job centres and scales as the model was fitted and keeps its components (see method)
      line(s, "scaling", "the model's");
      line(s, "components", "the model's");
    } else {
      line(s, "scaling", j.prepare().scaling().word());
      line(s, "components", j.reduce().components().isPresent() ? "k = " + j.reduce().components().getAsInt()
          : "smallest k reaching " + j.reduce().varianceTarget() + " of the variance (at most "
              + j.reduce().maxComponents() + ")");
    }
    line(s, "method", method.word() + " - " + methodReason);
    line(s, "memory", memory.describe());
    line(s, "block", BlockBudget.describe(j.reduce().blockRows(), features.size() + 1));
    line(s, "outputs", String.join(", ", outputs) + " under " + j.output().path() + " (" + j.output().mode().word()
        + ")");
    for (String note : notes) {
      line(s, "note", note);
    }
    for (String warning : warnings) {
      line(s, "warning", warning);
    }
    return s.toString();
  }

  private void describeLong(StringBuilder s, JobSettings j) {
    var l = longInput.layout();
    line(s, "layout", "long: one row per " + String.join(", ", longInput.keyColumns()) + " ("
        + (l.timed() ? (l.bucketMicros() == 0 ? "every distinct " + l.time() : l.time() + " in buckets of "
            + bucketText(l.bucketMicros())) : "no time: one row per entity") + "), one column per value of "
        + l.metric() + ", cells the " + l.aggregate().word() + " of " + l.value()
        + (j.input().filtered() ? "; input.where " + j.input().where() + " applies to the long rows" : ""));
    line(s, "metrics (" + longInput.metrics().size() + ")", (longInput.discovered() ? "found in the table: "
        : "as listed: ") + String.join(", ", longInput.metrics()));
    var renamed = longInput.renamed();
    if (!renamed.isEmpty()) {
      StringBuilder r = new StringBuilder();
      renamed.forEach((m, c) -> r.append(r.length() > 0 ? ", " : "").append(m).append(" -> ").append(c));
      line(s, "metric columns", r + " (not column names as they stand; written to metric-columns.csv)");
    }
    line(s, "sparse metrics", "a metric with a value in fewer than " + l.minPresence() + " of the rows is dropped"
        + " when the pivot has run (a warning names it)");
  }

  /** A bucket width in words: "5 minutes", "1 hour". */
  public static String bucketText(long micros) {
    long[] units = {86_400_000_000L, 3_600_000_000L, 60_000_000L, 1_000_000L, 1000L};
    String[] names = {"day", "hour", "minute", "second", "millisecond"};
    for (int i = 0; i < units.length; i++) {
      if (micros % units[i] == 0) {
        long n = micros / units[i];
        return n + " " + names[i] + (n == 1 ? "" : "s");
      }
    }
    return micros + " microseconds";
  }

  /** Features listed in full up to this many; a wider table lists its first 40 and last 5 and counts the types. */
  static final int FEATURES_LISTED = 60;

  private String describeFeatures() {
    StringBuilder s = new StringBuilder();
    int n = features.size();
    boolean wide = n > FEATURES_LISTED;
    for (int i = 0; i < n; i++) {
      if (wide && i == 40) {
        s.append(", ... ").append(n - 45).append(" more ...");
        i = n - 5;
      }
      if (i > 0) {
        s.append(", ");
      }
      s.append(features.get(i)).append(':').append(featureTypes.get(i));
    }
    if (wide) {
      java.util.Map<String, Integer> types = new java.util.TreeMap<>();
      featureTypes.forEach(t -> types.merge(t, 1, Integer::sum));
      StringBuilder t = new StringBuilder();
      types.forEach((type, count) -> t.append(t.length() > 0 ? ", " : "").append(count).append(' ').append(type));
      s.append(" (").append(t).append("; all listed in the run's model)");
    }
    return s.toString();
  }

  private static void line(StringBuilder s, String label, String value) {
    s.append(String.format(java.util.Locale.ROOT, "%-16s %s%n", label + ":", value));
  }
}
