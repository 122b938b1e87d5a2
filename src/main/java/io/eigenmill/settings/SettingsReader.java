package io.eigenmill.settings;

import com.typesafe.config.Config;
import com.typesafe.config.ConfigException;
import com.typesafe.config.ConfigFactory;
import com.typesafe.config.ConfigOrigin;
import com.typesafe.config.ConfigParseOptions;
import com.typesafe.config.ConfigUtil;
import com.typesafe.config.ConfigValue;
import com.typesafe.config.ConfigValueFactory;
import io.eigenmill.settings.Choices.Word;
import java.io.File;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalInt;
import java.util.stream.Collectors;

/**
 * Reads a HOCON job file (plus {@code --set key=value} overrides) into {@link JobSettings}.
 *
 * <p>Defaults come only from {@code eigenmill.job} in {@code reference.conf}. Every problem is collected before
 * anything fails, so the user sees them all at once; each names the file and line, the key, the value and the rule.
 * Keys not in the reference are rejected with a "did you mean" hint, except under {@code spark.conf}, which passes
 * Spark settings through.
 */
public final class SettingsReader {
  static final String ROOT = "eigenmill.job";
  static final String FREE_FORM = "spark.conf";

  private final Config reference;
  private final KeyChecks keys;

  public SettingsReader() {
    this.reference = ConfigFactory.defaultReference(SettingsReader.class.getClassLoader()).getConfig(ROOT);
    this.keys = new KeyChecks(reference);
  }

  /** Reads a job file; {@code sets} are {@code key=value} strings that override it. */
  public JobSettings read(File jobFile, List<String> sets) {
    return read(jobFile, sets, null);
  }

  /**
   * Reads a job file over an environment profile ({@code conf/local.conf}, {@code conf/cluster.conf}; may be null):
   * the job file wins over the profile, {@code sets} win over both.
   */
  public JobSettings read(File jobFile, List<String> sets, File envFile) {
    Config user = parse(jobFile, "job file");
    if (envFile != null) {
      user = user.withFallback(parse(envFile, "environment profile"));
    }
    return read(user, sets, jobFile.getName());
  }

  private static Config parse(File file, String what) {
    if (!file.isFile()) {
      throw new InvalidJobException(what + " " + file + " does not exist or is not a file");
    }
    try {
      return ConfigFactory.parseFile(file, ConfigParseOptions.defaults().setAllowMissing(false));
    } catch (ConfigException e) {
      throw new InvalidJobException(syntaxMessage(file.getName(), e));
    }
  }

  /** Reads settings from HOCON text (tests, embedded use). */
  public JobSettings readString(String hocon, List<String> sets, String sourceName) {
    Config user;
    try {
      user = ConfigFactory.parseString(hocon, ConfigParseOptions.defaults().setOriginDescription(sourceName));
    } catch (ConfigException e) {
      throw new InvalidJobException(syntaxMessage(sourceName, e));
    }
    return read(user, sets, sourceName);
  }

  private JobSettings read(Config fileConfig, List<String> sets, String sourceName) {
    List<String> problems = new ArrayList<>();
    Config user = applySets(fileConfig, sets, problems);
    Config merged;
    try {
      merged = user.withFallback(reference).resolve();
    } catch (ConfigException e) {
      throw new InvalidJobException(sourceName + ": " + e.getMessage());
    }
    keys.checkUnknownKeys(user, sourceName, problems);
    Fields f = new Fields(merged, user, sourceName, problems);
    JobSettings settings = build(f, sourceName);
    List<String> warnings = new ArrayList<>();
    keys.checkClusterKeys(user, merged, sourceName, problems, warnings);
    keys.checkFitOnlyKeys(user, merged, sourceName, warnings);
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
    return settings.withWarnings(warnings);
  }

  private static String syntaxMessage(String source, ConfigException e) {
    ConfigOrigin origin = e.origin();
    String line = origin != null && origin.lineNumber() > 0 ? ":" + origin.lineNumber() : "";
    String detail = e.getMessage();
    int cut = detail.indexOf(": ");
    if (origin != null && cut > 0 && detail.startsWith(origin.description())) {
      detail = detail.substring(cut + 2);
    }
    return source + line + ": HOCON syntax error: " + detail;
  }

  private Config applySets(Config fileConfig, List<String> sets, List<String> problems) {
    Config out = fileConfig;
    for (String set : sets) {
      int eq = set.indexOf('=');
      if (eq <= 0) {
        problems.add("--set " + set + ": expected key=value");
        continue;
      }
      String key = set.substring(0, eq).trim();
      String value = set.substring(eq + 1).trim();
      Config one;
      try {
        one = ConfigFactory.parseString(ConfigUtil.joinPath(ConfigUtil.splitPath(key)) + " = " + value,
            ConfigParseOptions.defaults().setOriginDescription("--set"));
      } catch (ConfigException e) {
        try {
          one = ConfigFactory.empty("--set").withValue(key, ConfigValueFactory.fromAnyRef(value, "--set"));
        } catch (ConfigException bad) {
          problems.add("--set " + set + ": '" + key + "' is not a valid key path");
          continue;
        }
      }
      out = one.withFallback(out);
    }
    return out;
  }

  static String where(String source, ConfigOrigin origin) {
    // a --set value's origin reads "--set" (built from a value) or "--set: 1" (parsed from its text)
    if (origin != null && (origin.description().equals("--set") || origin.description().startsWith("--set:"))) {
      return "--set: ";
    }
    int line = origin == null ? -1 : origin.lineNumber();
    String file = origin != null && origin.filename() != null ? new File(origin.filename()).getName() : source;
    return file + (line > 0 ? ":" + line : "") + ": ";
  }

  private JobSettings build(Fields f, String source) {
    String name = f.string("name");
    if (name.isEmpty()) {
      name = source.replaceFirst("\\.conf$", "");
    }
    String snapshotsIn = f.string("input.snapshots").strip();
    String inputTable = f.string("input.table").strip();
    String asOf = f.string("input.as-of").strip();
    String inputPath = f.string("input.path");
    String tableProblem = InputTables.sourceProblem(inputPath, inputTable, snapshotsIn);
    if (tableProblem != null) {
      f.problem(inputTable.isEmpty() ? "input.path" : "input.table", tableProblem);
    }
    String asOfProblem = InputTables.asOfProblem(inputTable, asOf);
    if (asOfProblem != null) {
      f.problem("input.as-of", asOfProblem);
    }
    if (!snapshotsIn.isEmpty() && !inputPath.isBlank()) {
      f.problem("input.snapshots", "input.snapshots = " + snapshotsIn + " and input.path = " + inputPath
          + " are both set: a fit reads either a table or a snapshot store; remove one");
    }
    Choices.InputLayout layout = f.choice("input.layout", Choices.InputLayout.values());
    JobSettings.LongLayout longLayout = layout == Choices.InputLayout.LONG ? longLayout(f, snapshotsIn) : null;
    var input = new JobSettings.Input(inputPath, f.choice("input.format", Choices.InputFormat.values()),
        f.choice("input.corrupt-files", Choices.CorruptFiles.values()), f.string("input.where").strip(),
        snapshotsIn, layout, longLayout, inputTable, asOf);
    var features = new JobSettings.Features(f.strings("features.columns"), f.strings("features.exclude"),
        f.strings("features.keys"));
    var prepare = new JobSettings.Prepare(f.choice("prepare.scaling", Choices.Scaling.values()),
        f.choice("prepare.missing", Choices.MissingPolicy.values()));
    OptionalInt components = f.optionalInt("reduce.components", 1, 100_000);
    if (components.isPresent() && f.userSet("reduce.variance-target")) {
      f.problem("reduce.components", "reduce.components and reduce.variance-target are both set; set only one"
          + " (components fixes k, variance-target chooses the smallest k reaching the target)");
    }
    var reduce = new JobSettings.Reduce(f.choice("reduce.method", Choices.Method.values()), components,
        f.fraction("reduce.variance-target"), f.intIn("reduce.max-components", 1, 100_000),
        f.intIn("reduce.block-rows", 16, 1 << 20), f.intIn("reduce.covariance-max-features", 1, 200_000),
        f.intIn("reduce.randomized.oversample", 0, 1000), f.intIn("reduce.randomized.power-iterations", 1, 50),
        f.longValue("reduce.randomized.seed"), f.strings("reduce.group-by"),
        f.optionalInt("reduce.min-group-rows", 2, Integer.MAX_VALUE), f.positive("reduce.randomized.tolerance"),
        f.intIn("reduce.randomized.max-power-iterations", 1, 50));
    if (reduce.maxPowerIterations() < reduce.powerIterations()) {
      f.problem("reduce.randomized.max-power-iterations", "reduce.randomized.max-power-iterations = "
          + reduce.maxPowerIterations() + " is below reduce.randomized.power-iterations = " + reduce.powerIterations()
          + ": the cap must be at least the iterations always run; raise it (equal: no iteration is added to reach"
          + " reduce.randomized.tolerance)");
    }
    var monitor = new JobSettings.Monitor(f.openFraction("monitor.confidence"),
        f.choice("monitor.q-limit", Choices.QLimit.values()));
    var apply = new JobSettings.Apply(f.string("apply.model"), f.string("apply.compare-with"),
        f.string("apply.centroids"), f.bool("apply.label-rows"),
        f.choice("apply.unknown-group", Choices.UnknownGroup.values()));
    int[] kRange = f.range("cluster.k-range");
    var cluster = new JobSettings.Cluster(f.bool("cluster.enabled"),
        f.choice("cluster.space", Choices.ClusterSpace.values()), f.optionalInt("cluster.k", 1, 10_000),
        kRange[0], kRange[1], f.choice("cluster.select-by", Choices.KSelection.values()),
        f.intIn("cluster.restarts", 1, 1000), f.intIn("cluster.max-iterations", 1, 100_000),
        f.positive("cluster.tolerance"), f.intIn("cluster.silhouette-sample", 10, 100_000),
        f.intIn("cluster.init-sample", 0, 10_000_000), f.longValue("cluster.seed"), f.string("cluster.entity"),
        f.bool("cluster.entity-spread"), f.intIn("cluster.restarts-at-best", 1, 1000),
        f.intIn("cluster.max-restarts", 0, 100_000));
    var output = new JobSettings.Output(f.required("output.path"),
        f.choice("output.mode", Choices.OutputMode.values()), f.bool("output.scores"),
        f.bool("output.reconstruction"), f.intIn("output.report-sample", 0, 50_000),
        f.string("output.snapshots").strip(), f.strings("snapshots.by"), f.string("output.table-prefix").strip(),
        f.choice("output.table-mode", Choices.TableMode.values()));
    if (f.userSet("reduce.min-group-rows") && !reduce.grouped()) {
      f.problem("reduce.min-group-rows", "reduce.min-group-rows = " + reduce.minGroupRows().getAsInt() + " has no"
          + " effect without reduce.group-by (one model per group); set reduce.group-by or remove the key");
    }
    if (reduce.grouped() && input.fromSnapshots()) {
      f.problem("reduce.group-by", "reduce.group-by = " + reduce.groupBy() + " with input.snapshots: not available"
          + " in this version (snapshots are written without groups); fit the groups from the table");
    }
    if (!input.fromSnapshots() || !output.writesSnapshots()) {
      snapshotRules(f, input, output, apply, cluster, reduce, prepare);
    } else {
      f.problem("output.snapshots", "output.snapshots = " + output.snapshots() + " with input.snapshots = "
          + input.snapshots() + ": a fit from snapshots reads no rows, so it has no new snapshots to write;"
          + " remove output.snapshots");
    }
    var spark = new JobSettings.SparkSection(f.string("spark.master"), f.sparkConf());
    return new JobSettings(name, source, input, features, prepare, reduce, monitor, apply, cluster, output, spark);
  }

  /** {@code input.long}, checked: an entity, a metric and a value column, a bucket of at least a millisecond. */
  private static JobSettings.LongLayout longLayout(Fields f, String snapshotsIn) {
    List<String> entity = f.strings("input.long.entity");
    if (entity.isEmpty()) {
      f.problem("input.long.entity", "input.long.entity = []: input.layout = long needs the columns naming an"
          + " entity (e.g. [host]): each pivoted row is one entity's bucket");
    }
    String metric = f.string("input.long.metric").strip();
    String value = f.string("input.long.value").strip();
    String time = f.string("input.long.time").strip();
    for (String[] kv : new String[][] {{"input.long.metric", metric}, {"input.long.value", value}}) {
      if (kv[1].isEmpty()) {
        f.problem(kv[0], kv[0] + " is empty: input.layout = long needs it (the column of the metric's name, the"
            + " column of its value)");
      }
    }
    String bucketText = f.string("input.long.bucket").strip();
    long bucketMicros = 0;
    if (!bucketText.isEmpty()) {
      try {
        java.time.Duration d = f.merged.getDuration("input.long.bucket");
        bucketMicros = d.toNanos() / 1000;
        if (d.toMillis() < 1) {
          f.problem("input.long.bucket", "input.long.bucket = " + bucketText + ": a bucket must be at least 1"
              + " millisecond (or empty: every distinct time is a row)");
        }
      } catch (com.typesafe.config.ConfigException | ArithmeticException e) {
        f.problem("input.long.bucket", "input.long.bucket = " + bucketText + ": not a duration; write e.g."
            + " \"5 minutes\", \"1 hour\", \"30 seconds\" (or empty: every distinct time is a row)");
      }
    }
    List<String> named = new ArrayList<>(entity);
    named.add(metric);
    named.add(value);
    if (!time.isEmpty()) {
      named.add(time);
    }
    if (new java.util.HashSet<>(named).size() < named.size()) {
      f.problem("input.long", "input.long: entity " + entity + ", time " + (time.isEmpty() ? "(none)" : time)
          + ", metric " + metric + " and value " + value + " must be different columns");
    }
    if (!snapshotsIn.isEmpty()) {
      f.problem("input.layout", "input.layout = long with input.snapshots: a snapshot store holds moments, not a"
          + " table; remove input.layout (snapshots written from a long table are read like any others)");
    }
    return new JobSettings.LongLayout(entity, time, metric, value, bucketMicros,
        f.choice("input.long.aggregate", Choices.Aggregate.values()), f.intIn("input.long.max-metrics", 1, 200_000),
        f.share("input.long.min-presence"));
  }

  /**
   * What a snapshot store asks of the other settings. Writing ({@code output.snapshots}): a fit (not an apply job)
   * with the covariance method, whose first pass computes the moments a snapshot keeps, and without impute-mean,
   * whose filled cells depend on the means of the run's whole input. Reading ({@code input.snapshots}): a fit that
   * needs no rows (no scores, clusters, reconstruction, labels) by the covariance method, without impute-mean
   * (moments of complete rows cannot tell what a mean-filled cell would have added).
   */
  private static void snapshotRules(Fields f, JobSettings.Input input, JobSettings.Output output,
      JobSettings.Apply apply, JobSettings.Cluster cluster, JobSettings.Reduce reduce, JobSettings.Prepare prepare) {
    boolean writing = output.writesSnapshots();
    boolean reading = input.fromSnapshots();
    if (!writing && !reading) {
      if (f.userSet("snapshots.by")) {
        f.problem("snapshots.by", "snapshots.by = " + output.snapshotsBy() + " has no effect without"
            + " output.snapshots (the store the snapshots go to); set output.snapshots or remove snapshots.by");
      }
      return;
    }
    String key = writing ? "output.snapshots" : "input.snapshots";
    String named = key + " = " + (writing ? output.snapshots() : input.snapshots());
    if (apply.appliesModel()) {
      f.problem(key, named + " with apply.model = " + apply.model() + ": snapshots are a fit's moments; an apply"
          + " job neither writes nor reads them");
    }
    if (reduce.method() != Choices.Method.AUTO && reduce.method() != Choices.Method.COVARIANCE) {
      f.problem(key, named + " with reduce.method = " + reduce.method().word() + ": snapshots hold the"
          + " covariance method's moments; set reduce.method = covariance (or auto)");
    }
    if (prepare.missing() == Choices.MissingPolicy.IMPUTE_MEAN) {
      f.problem(key, named + " with prepare.missing = impute-mean: a cell filled with the mean of one run's"
          + " input changes the co-moments by amounts that depend on that run's whole input, so snapshots of"
          + " several runs could not be merged into the moments of a fit over their rows; set prepare.missing ="
          + " drop-rows (or fail)");
    }
    if (reading) {
      if (f.userSet("snapshots.by")) {
        f.problem("snapshots.by", "snapshots.by = " + output.snapshotsBy() + " with input.snapshots: the keys"
            + " are the store's own; select them with input.where");
      }
      List<String> rowOutputs = new ArrayList<>();
      if (output.scores()) {
        rowOutputs.add("output.scores = true");
      }
      if (output.reconstruction()) {
        rowOutputs.add("output.reconstruction = true");
      }
      if (cluster.enabled()) {
        rowOutputs.add("cluster.enabled = true");
      }
      if (!apply.centroids().isEmpty()) {
        rowOutputs.add("apply.centroids = " + apply.centroids());
      }
      if (!rowOutputs.isEmpty()) {
        f.problem(key, named + " with " + String.join(", ", rowOutputs) + ": a fit from snapshots reads no rows,"
            + " so it has none to score or cluster; fit from snapshots, then apply the model to the rows"
            + " (apply.model)");
      }
    }
  }

  /** Typed getters that record a problem instead of throwing, so that all problems are reported together. */
  private static final class Fields {
    private final Config merged;
    private final Config user;
    private final String source;
    private final List<String> problems;

    Fields(Config merged, Config user, String source, List<String> problems) {
      this.merged = merged;
      this.user = user;
      this.source = source;
      this.problems = problems;
    }

    boolean userSet(String key) {
      return user.hasPath(key);
    }

    void problem(String key, String rule) {
      ConfigOrigin origin = user.hasPathOrNull(key) ? user.getValue(key).origin() : null;
      problems.add(where(source, origin) + rule);
    }

    private void bad(String key, String rule) {
      String shown = merged.hasPath(key) ? merged.getValue(key).render(
          com.typesafe.config.ConfigRenderOptions.concise()) : "null";
      problem(key, key + " = " + shown + ": " + rule);
    }

    String string(String key) {
      try {
        return merged.getString(key);
      } catch (ConfigException e) {
        bad(key, "must be a string");
        return "";
      }
    }

    String required(String key) {
      String v = string(key);
      if (v.isBlank() && problems.stream().noneMatch(p -> p.contains(key + " "))) {
        problem(key, key + " is required and has no value (set it in the job file or with --set " + key + "=...)");
      }
      return v;
    }

    List<String> strings(String key) {
      try {
        return List.copyOf(merged.getStringList(key));
      } catch (ConfigException e) {
        bad(key, "must be a list of strings, e.g. [\"cpu_*\", \"mem_used_pct\"]");
        return List.of();
      }
    }

    boolean bool(String key) {
      try {
        return merged.getBoolean(key);
      } catch (ConfigException e) {
        bad(key, "must be true or false");
        return false;
      }
    }

    <E extends Enum<E> & Word> E choice(String key, E[] values) {
      String v = string(key);
      for (E e : values) {
        if (e.word().equals(v)) {
          return e;
        }
      }
      bad(key, "must be one of " + Arrays.stream(values).map(Word::word).collect(Collectors.joining(", ")));
      return values[0];
    }

    int intIn(String key, int min, int max) {
      try {
        int v = merged.getInt(key);
        if (v < min || v > max) {
          bad(key, "must be an integer from " + min + " to " + max);
        }
        return v;
      } catch (ConfigException e) {
        bad(key, "must be an integer from " + min + " to " + max);
        return min;
      }
    }

    OptionalInt optionalInt(String key, int min, int max) {
      if (merged.getIsNull(key)) {
        return OptionalInt.empty();
      }
      return OptionalInt.of(intIn(key, min, max));
    }

    long longValue(String key) {
      try {
        return merged.getLong(key);
      } catch (ConfigException e) {
        bad(key, "must be an integer");
        return 0L;
      }
    }

    double number(String key) {
      try {
        return merged.getDouble(key);
      } catch (ConfigException e) {
        bad(key, "must be a number");
        return Double.NaN;
      }
    }

    double fraction(String key) {
      double v = number(key);
      if (!(v > 0 && v <= 1) && !Double.isNaN(v)) {
        bad(key, "must be a fraction in (0, 1]");
      }
      return v;
    }

    /** A share in [0, 1]. */
    double share(String key) {
      double v = number(key);
      if (!(v >= 0 && v <= 1) && !Double.isNaN(v)) {
        bad(key, "must be a share from 0 to 1");
      }
      return v;
    }

    double openFraction(String key) {
      double v = number(key);
      if (!(v > 0 && v < 1) && !Double.isNaN(v)) {
        bad(key, "must be a fraction in (0, 1)");
      }
      return v;
    }

    /** A finite positive number. */
    double positive(String key) {
      double v = number(key);
      if ((!(v > 0) || Double.isInfinite(v)) && !Double.isNaN(v)) {
        bad(key, "must be a positive number");
      }
      return v;
    }

    /**
     * A range of k, {@code "LOW..HIGH"} with 2 <= LOW <= HIGH <= 1000: the quality measures that choose k compare
     * two clusters or more.
     */
    int[] range(String key) {
      String v = string(key);
      String[] parts = v.split("\\.\\.");
      int lo = 2;
      try {
        if (parts.length == 2) {
          lo = Integer.parseInt(parts[0].trim());
          int hi = Integer.parseInt(parts[1].trim());
          if (lo >= 2 && hi >= lo && hi <= 1000) {
            return new int[] {lo, hi};
          }
        }
      } catch (NumberFormatException ignored) {
        // reported below
      }
      bad(key, "must be a range \"LOW..HIGH\" with 2 <= LOW <= HIGH <= 1000" + (lo < 2 ? " (the quality"
          + " measures that choose k need two clusters; set cluster.k = 1 to get one cluster)" : ""));
      return new int[] {2, 2};
    }

    Map<String, String> sparkConf() {
      Map<String, String> out = new LinkedHashMap<>();
      Config c = merged.getConfig(FREE_FORM);
      for (Map.Entry<String, ConfigValue> e : KeyChecks.sortedEntries(c)) {
        String key = String.join(".", ConfigUtil.splitPath(e.getKey()));
        out.put(key, String.valueOf(e.getValue().unwrapped()));
      }
      return out;
    }
  }
}
