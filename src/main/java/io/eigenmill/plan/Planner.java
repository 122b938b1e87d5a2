package io.eigenmill.plan;

import io.eigenmill.io.FooterLayouts;
import io.eigenmill.io.GroupModels;
import io.eigenmill.io.InputFilter;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
import io.eigenmill.io.LongTable;
import io.eigenmill.io.TableLoader;
import io.eigenmill.math.BlockBudget;
import io.eigenmill.settings.Choices.InputFormat;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;
import org.apache.hadoop.conf.Configuration;
import org.apache.hadoop.fs.Path;
import org.apache.spark.network.util.JavaUtils;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DecimalType;
import org.apache.spark.sql.types.NumericType;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;

/**
 * Resolves settings against the input's schema: feature globs, keys, types, {@code reduce.components} against the
 * features, {@code cluster.entity} ({@link ClusterColumns}), the method and memory. Reads the schema and (for up to
 * {@link #FOOTER_LIMIT} Parquet files) the footers' row counts; never the data. All problems are collected and
 * thrown together as one {@link InvalidJobException}; the settings reader has checked what the settings alone show.
 */
public final class Planner {
  static final int FOOTER_LIMIT = 256;

  private Planner() {}

  public static JobPlan plan(SparkSession spark, JobSettings settings) {
    if (settings.apply().appliesModel()) {
      return planApply(spark, settings, ModelStore.read(spark, "apply.model", settings.apply().model()));
    }
    if (settings.input().fromSnapshots()) {
      return SnapshotPlanner.planFit(spark, settings);
    }
    if (settings.input().isLong()) {
      LongTable.View view = LongTable.open(spark, settings.input(), settings.features(), null);
      return plan(spark, longSettings(settings, view), view.wide()).withLongInput(view);
    }
    Dataset<Row> table = TableLoader.read(spark, settings.input());
    return plan(spark, settings, table);
  }

  /**
   * The settings of a fit over the wide view of a long table: every metric column the view has is a feature
   * (features.columns and features.exclude chose the metric names already), and the view's row keys (entity,
   * carried partition columns, time bucket) are keys, with the user's.
   */
  private static JobSettings longSettings(JobSettings settings, LongTable.View view) {
    List<String> keys = new ArrayList<>(view.keyColumns());
    settings.features().keys().stream().filter(k -> !keys.contains(k)).forEach(keys::add);
    var features = new JobSettings.Features(List.of(), List.of(), keys);
    return new JobSettings(settings.name(), settings.sourceFile(), settings.input(), features, settings.prepare(),
        settings.reduce(), settings.monitor(), settings.apply(), settings.cluster(), settings.output(),
        settings.spark(), settings.warnings());
  }

  /**
   * The plan of a run once the pivot of its long table has run: a fit leaves out the metrics the pivot found too
   * sparse ({@code input.long.min-presence}, each named in a warning); the row estimate becomes the rows pivoted.
   * An apply job keeps the model's features (their gaps follow {@code prepare.missing}).
   */
  public static JobPlan afterPivot(JobPlan plan, LongTable.Staged staged) {
    List<String> features = new ArrayList<>(plan.features());
    List<String> types = new ArrayList<>(plan.featureTypes());
    List<String> warnings = new ArrayList<>(plan.warnings());
    if (!plan.kind().startsWith("apply")) {
      List<String> sparse = staged.view().sparse();
      for (String c : sparse) {
        int j = staged.view().columns().indexOf(c);
        int at = features.indexOf(c);
        if (at < 0) {
          continue;
        }
        features.remove(at);
        types.remove(at);
        warnings.add("input.long.min-presence = " + staged.view().layout().minPresence() + ": metric "
            + staged.view().metrics().get(j) + " has a value in " + String.format(Locale.ROOT, "%.1f%%", 100
                * staged.view().pivoted().presence(j)) + " of the " + String.format(Locale.ROOT, "%,d",
                    staged.view().pivoted().rows())
            + " pivoted rows: dropped");
      }
      if (features.isEmpty()) {
        throw new InvalidJobException("input.long.min-presence = " + staged.view().layout().minPresence()
            + ": every metric has a value in fewer than that share of the " + String.format(Locale.ROOT, "%,d",
                staged.view().pivoted().rows()) + " pivoted rows (" + String.join(", ", staged.view().metrics()) + "); lower"
            + " input.long.min-presence, widen input.long.bucket, or set prepare.missing = impute-mean");
      }
      int d = features.size();
      plan.settings().reduce().components().ifPresent(k -> {
        if (k > d) {
          throw new InvalidJobException("reduce.components = " + k + ": more components than the " + d
              + " metrics left after input.long.min-presence dropped " + (plan.d() - d));
        }
      });
    }
    return new JobPlan(plan.settings(), plan.kind(), features, types, plan.keys(), plan.partitionColumns(),
        staged.view().pivoted().rows(), plan.inputBytes(), plan.method(), plan.methodReason(), plan.memory(),
        plan.outputs(), plan.notes(), warnings, plan.selection(), plan.snapshots(), plan.groups(), staged.view())
        .withSplits(plan.splits());
  }

  /**
   * One model standing for a grouped model in the checks of an apply plan: the union of the groups' features (with
   * their types) and the largest k; the method and rows of the first group. Never used to score.
   */
  public static PcaModel unionModel(GroupModels groups) {
    var models = groups.models();
    List<String> features = GroupModels.features(models);
    List<String> types = GroupModels.featureTypes(models);
    PcaModel first = models.values().iterator().next();
    int k = models.values().stream().mapToInt(PcaModel::k).max().orElse(0);
    long rows = models.values().stream().mapToLong(PcaModel::rows).sum();
    int d = features.size();
    return new PcaModel(first.formatVersion(), first.productVersion(), features, types, first.scaling(),
        first.method(), rows, new double[d], new double[d], 0, new double[0], new double[0], false, 0,
        PcaModel.fingerprint(features, types), new double[d]);
  }

  /**
   * The plan of an apply run with a grouped model: as {@link #planApply} over the union of the groups' features,
   * and the group columns must be in the input. What is of one model is refused: clustering, labels, the
   * reconstruction, a comparison with another model, impute-mean.
   */
  public static JobPlan planApplyGroups(SparkSession spark, JobSettings settings, GroupModels groups) {
    List<String> problems = new ArrayList<>();
    String named = "apply.model = " + settings.apply().model() + " (one model per value of "
        + String.join(", ", groups.columns()) + ")";
    if (groups.models().isEmpty()) {
      problems.add(named + ": no group has a model (every group was below reduce.min-group-rows when fitted)");
      throw new InvalidJobException(problems);
    }
    JobPlan applyPlan = planApply(spark, settings, unionModel(groups));
    StructType schema = applyPlan.longInput() != null ? applyPlan.longInput().wide().schema()
        : TableLoader.read(spark, settings.input()).schema();
    for (String g : groups.columns()) {
      if (schema.getFieldIndex(g).isEmpty()) {
        problems.add(named + ": the input " + settings.input().source() + " lacks the group column " + g);
      }
    }
    List<String> other = new ArrayList<>();
    if (settings.cluster().enabled()) {
      other.add("cluster.enabled = true");
    }
    if (!settings.apply().centroids().isEmpty()) {
      other.add("apply.centroids");
    }
    if (settings.output().reconstruction()) {
      other.add("output.reconstruction = true");
    }
    if (!settings.apply().compareWith().isEmpty()) {
      other.add("apply.compare-with");
    }
    if (settings.prepare().missing() == io.eigenmill.settings.Choices.MissingPolicy.IMPUTE_MEAN) {
      other.add("prepare.missing = impute-mean");
    }
    if (!other.isEmpty()) {
      problems.add(named + " with " + String.join(", ", other) + ": not available with groups in this version"
          + " (of one model); remove " + (other.size() > 1 ? "them" : "it") + ", or apply the fit's pooled-model/");
    }
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
    JobPlan plan = applyPlan;
    return new JobPlan(plan.settings(), "apply (groups)", plan.features(), plan.featureTypes(), plan.keys(),
        plan.partitionColumns(), plan.rowEstimate(), plan.inputBytes(), plan.method(), "apply: one saved model per"
            + " value of " + String.join(", ", groups.columns()) + " (" + groups.models().size() + " groups)",
        plan.memory(), plan.outputs(), plan.notes(), plan.warnings(), plan.selection(), null, null,
        plan.longInput()).withSplits(plan.splits());
  }

  /**
   * The plan of an apply run: the features are the model's, in the model's order; each must be in the input with the
   * type it had when the model was fitted (columns may be in any order; extra columns are ignored).
   */
  public static JobPlan planApply(SparkSession spark, JobSettings settings, PcaModel model) {
    if (settings.input().isLong()) {
      LongTable.View view = LongTable.open(spark, settings.input(), settings.features(),
          new LinkedHashSet<>(model.features()));
      return planApply(spark, longSettings(settings, view), model, view.wide()).withLongInput(view);
    }
    return planApply(spark, settings, model, TableLoader.read(spark, settings.input()));
  }

  /** The plan of an apply run over {@code table}, the (wide) input as read. */
  public static JobPlan planApply(SparkSession spark, JobSettings settings, PcaModel model, Dataset<Row> table) {
    List<String> problems = new ArrayList<>();
    StructType schema = table.schema();
    checkDuplicates(schema, problems);
    Dataset<Row> kept = filtered(table, settings, problems);
    List<String> keys = resolveKeys(schema, settings.features().keys(), problems);
    List<String> missing = new ArrayList<>();
    List<String> retyped = new ArrayList<>();
    for (int j = 0; j < model.d(); j++) {
      String f = model.features().get(j);
      var index = schema.getFieldIndex(f);
      if (index.isEmpty()) {
        missing.add(f);
      } else {
        String type = schema.fields()[(Integer) index.get()].dataType().simpleString();
        if (!type.equals(model.featureTypes().get(j))) {
          retyped.add(f + " (" + type + ", the model was fitted on " + model.featureTypes().get(j) + ")");
        }
      }
    }
    if (!missing.isEmpty()) {
      problems.add("apply.model = " + settings.apply().model() + ": the input " + settings.input().source()
          + " lacks the model feature" + (missing.size() > 1 ? "s " : " ") + String.join(", ", missing));
    }
    if (!retyped.isEmpty()) {
      problems.add("apply.model = " + settings.apply().model() + ": feature type changed in the input: "
          + String.join(", ", retyped));
    }
    ClusterColumns.check(settings, schema, keys, model.features(), problems);
    List<String> partitionColumns = partitionColumns(spark, table, settings);
    ScoreColumns.check(settings, keys, partitionColumns, problems);
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
    long driverHeap = driverHeap(spark);
    long taskHeap = taskHeap(spark);
    int d = model.d();
    int blockRows = BlockBudget.rows(settings.reduce().blockRows(), d + 1);
    MemoryEstimate memory = new MemoryEstimate(8L * d * (model.k() + 2), 8L * blockRows
        * (2L * d + model.k()), driverHeap, taskHeap, "block of " + blockRows + " x " + d);
    InputSelection selection = selection(table, kept, settings, model.features(), partitionColumns);
    Footers footers = footers(spark, kept, selection, settings);
    return new JobPlan(settings, "apply", model.features(), model.featureTypes(), keys, partitionColumns,
        footers == null ? -1 : footers.rows(), TableLoader.sizeBytes(spark, settings.input().path()),
        model.method(), "apply: the saved model (" + model.method().word() + ", k = " + model.k() + ", fitted on "
            + String.format(Locale.ROOT, "%,d", model.rows()) + " rows)", memory, outputs(settings), List.of(),
        settings.warnings(), selection).withSplits(splits(spark, settings, d + keys.size(), footers));
  }

  /**
   * The plan of a fit over {@code table}, the input as read: {@code input.where} is checked against its schema here
   * (with every other problem) and its selection planned.
   */
  public static JobPlan plan(SparkSession spark, JobSettings settings, Dataset<Row> table) {
    List<String> problems = new ArrayList<>();
    List<String> notes = new ArrayList<>();
    List<String> warnings = new ArrayList<>(settings.warnings());
    StructType schema = table.schema();
    checkDuplicates(schema, problems);
    Dataset<Row> kept = filtered(table, settings, problems);
    List<String> partitionColumns = partitionColumns(spark, table, settings);
    List<String> keys = resolveKeys(schema, settings.features().keys(), problems);
    List<StructField> features = resolveFeatures(schema, settings.features(), keys, problems, notes, warnings);
    if (features.isEmpty() && problems.isEmpty()) {
      problems.add("features.columns = " + settings.features().columns() + ": no numeric feature column is left"
          + " after features.exclude and features.keys");
    }
    int d = features.size();
    settings.reduce().components().ifPresent(k -> {
      if (d > 0 && k > d) {
        problems.add("reduce.components = " + k + ": more components than the " + d + " features");
      }
    });
    List<String> names = features.stream().map(StructField::name).toList();
    ClusterColumns.check(settings, schema, keys, names, problems);
    ScoreColumns.check(settings, keys, partitionColumns, problems);
    MethodChoice.Choice choice = d == 0 ? null : choose(spark, settings, d, problems);
    SnapshotPlan snapshots = !settings.output().writesSnapshots() || d == 0 ? null
        : SnapshotPlanner.planWrite(spark, settings, schema, partitionColumns, names, choice, problems);
    GroupPlan groups = !settings.reduce().grouped() || d == 0 ? null
        : groupPlan(spark, settings, schema, names, choice, problems);
    if (!problems.isEmpty()) {
      throw new InvalidJobException(problems);
    }
    List<String> types = features.stream().map(f -> f.dataType().simpleString()).toList();
    String kind = settings.apply().appliesModel() ? "apply" : "fit";
    InputSelection selection = selection(table, kept, settings, names, partitionColumns);
    TableRead tableRead = settings.input().fromTable() ? TableRead.of(spark, settings.input(), kept, names) : null;
    Footers footers = tableRead != null && tableRead.rows() >= 0 ? null
        : footers(spark, kept, selection, settings);
    long rows = tableRead == null || tableRead.rows() < 0 ? (footers == null ? -1 : footers.rows())
        : settings.input().filtered() ? -1 : tableRead.rows();
    var keep = KeptPasses.of(spark, settings, choice.method(), d, rows,
        settings.input().format() == InputFormat.PARQUET);
    if (keep != null) {
      notes.add("passes: " + keep.line());
    }
    JobPlan plan = new JobPlan(settings, kind, names, types, keys, partitionColumns,
        rows, TableLoader.sizeBytes(spark, settings.input().path()),
        choice.method(), choice.reason(), choice.memory(), outputs(settings), notes, warnings, selection, snapshots,
        groups).withSplits(splits(spark, settings, d, footers));
    return tableRead == null ? plan : plan.withTableRead(tableRead);
  }

  /**
   * Checks {@code reduce.group-by} against the input and the other settings: each column present, of a key type,
   * not a feature (within a group it would be constant); the covariance or TSQR method (the randomized method's
   * passes would need a basis per group); no clustering, reconstruction or snapshots yet, whose outputs are of one
   * model. Problems are added.
   */
  private static GroupPlan groupPlan(SparkSession spark, JobSettings settings, StructType schema,
      List<String> features, MethodChoice.Choice choice, List<String> problems) {
    JobSettings.Reduce r = settings.reduce();
    String named = "reduce.group-by = " + r.groupBy();
    List<String> types = keyColumnTypes(schema, r.groupBy(), features, named, "within a group it is constant, so"
        + " it cannot be both: exclude it with features.exclude", problems);
    java.util.Set<String> taken = ModelStore.groupTableColumns();
    for (String c : r.groupBy()) {
      taken.stream().filter(t -> t.equalsIgnoreCase(c)).findFirst().ifPresent(t -> problems.add(named
          + ": column " + c + " has the name of a column that model/, components/ and spectrum/ write beside the"
          + " group columns (" + String.join(", ", taken) + "); group by a copy of it under another name"));
    }
    if (choice != null && choice.method() == io.eigenmill.settings.Choices.Method.RANDOMIZED) {
      problems.add(named + " with " + (r.method() == io.eigenmill.settings.Choices.Method.AUTO
          ? "reduce.method = auto, which chose randomized (" + choice.reason() + ")" : "reduce.method = randomized")
          + ": the randomized method's passes multiply the rows by one basis, and groups would need one basis"
          + " each; set reduce.method = covariance or tsqr, or select fewer features");
    }
    List<String> other = new ArrayList<>();
    if (settings.cluster().enabled()) {
      other.add("cluster.enabled = true");
    }
    if (settings.output().reconstruction()) {
      other.add("output.reconstruction = true");
    }
    if (settings.output().writesSnapshots()) {
      other.add("output.snapshots");
    }
    if (settings.prepare().missing() == io.eigenmill.settings.Choices.MissingPolicy.IMPUTE_MEAN) {
      other.add("prepare.missing = impute-mean");
    }
    if (!other.isEmpty()) {
      problems.add(named + " with " + String.join(", ", other) + ": not available with groups in this version"
          + " (their outputs are of one model); remove " + (other.size() > 1 ? "them" : "it") + " or the grouping");
    }
    if (types.size() != r.groupBy().size()) {
      return null;
    }
    int d = features.size();
    long summary = 8L * d * d;
    long block = 8L * BlockBudget.rows(r.blockRows(), d + 1) * (d + 1L);
    return new GroupPlan(new io.eigenmill.engine.KeyColumns(r.groupBy(), types,
        spark.conf().get("spark.sql.session.timeZone")), r.minGroupRows(d), summary, block, driverHeap(spark) / 4,
        taskHeap(spark) / 4);
  }

  /**
   * The types of key columns {@code columns} (snapshot keys, groups), or fewer types than columns with the problems
   * added: a column must be in the input, of a type a key can have ({@link io.eigenmill.engine.KeyColumns}), and not a
   * feature ({@code whyNotFeature} says why, after "is also a feature; ").
   */
  static List<String> keyColumnTypes(StructType schema, List<String> columns, List<String> features, String named,
      String whyNotFeature, List<String> problems) {
    List<String> types = new ArrayList<>();
    for (String c : columns) {
      var index = schema.getFieldIndex(c);
      if (index.isEmpty()) {
        problems.add(named + ": column " + c + " is not in the input (columns: "
            + String.join(", ", schema.fieldNames()) + ")");
        continue;
      }
      DataType type = schema.fields()[(Integer) index.get()].dataType();
      String rule = io.eigenmill.engine.KeyColumns.unsupported(type);
      if (rule != null) {
        problems.add(named + ": column " + c + ": " + rule);
      } else if (features.contains(c)) {
        problems.add(named + ": column " + c + " is also a feature; " + whyNotFeature);
      }
      types.add(type.simpleString());
    }
    return types;
  }

  /** {@code table} filtered by {@code input.where}; {@code table} when unset or when its problem is added. */
  private static Dataset<Row> filtered(Dataset<Row> table, JobSettings settings, List<String> problems) {
    // a long table's filter applies to its long rows, before the pivot (LongTable.open)
    if (!settings.input().filtered() || settings.input().isLong()) {
      return table;
    }
    String problem = InputFilter.problem(table, settings.input().where());
    if (problem != null) {
      problems.add(problem);
      return table;
    }
    return InputFilter.apply(table, settings.input());
  }

  private static InputSelection selection(Dataset<Row> table, Dataset<Row> kept, JobSettings settings,
      List<String> features, List<String> partitionColumns) {
    if (!settings.input().filtered() || settings.input().isLong()) {
      return null;
    }
    return InputSelection.of(table, kept, settings.input().where(), settings.input().source(), features,
        partitionColumns);
  }

  /** The method for d features, or null with its problem added when even the chosen method does not fit. */
  static MethodChoice.Choice choose(SparkSession spark, JobSettings settings, int d, List<String> problems) {
    try {
      return MethodChoice.choose(settings.reduce(), d, driverHeap(spark), taskHeap(spark));
    } catch (InvalidJobException e) {
      problems.addAll(e.problems());
      return null;
    }
  }

  static void checkDuplicates(StructType schema, List<String> problems) {
    Set<String> seen = new LinkedHashSet<>();
    for (String name : schema.fieldNames()) {
      if (!seen.add(name.toLowerCase(Locale.ROOT))) {
        problems.add("input.path: the input has two columns named " + name
            + " (column names must be unique, ignoring case)");
      }
    }
  }

  private static List<String> resolveKeys(StructType schema, List<String> keys, List<String> problems) {
    List<String> out = new ArrayList<>();
    for (String key : keys) {
      if (schema.getFieldIndex(key).isEmpty()) {
        problems.add("features.keys: column " + key + " is not in the input (columns: "
            + String.join(", ", schema.fieldNames()) + ")");
      } else {
        out.add(key);
      }
    }
    return out;
  }

  /**
   * The feature columns: those {@code features.columns} names or matches (all numeric columns when empty), less
   * {@code features.exclude}. A glob never picks a key column; when the user's own glob matches a numeric key that
   * {@code features.exclude} does not remove, a warning says that the column is used as a key only.
   */
  static List<StructField> resolveFeatures(StructType schema, JobSettings.Features f, List<String> keys,
      List<String> problems, List<String> notes, List<String> warnings) {
    Set<String> chosen = new LinkedHashSet<>();
    Map<String, String> keysMatched = new LinkedHashMap<>();
    List<String> patterns = f.columns().isEmpty() ? List.of("*") : f.columns();
    for (String pattern : patterns) {
      boolean glob = isGlob(pattern);
      Pattern regex = globRegex(pattern);
      int matched = 0;
      for (StructField field : schema.fields()) {
        if (!regex.matcher(field.name()).matches()) {
          continue;
        }
        matched++;
        if (!isNumeric(field.dataType())) {
          if (glob) {
            if (!keys.contains(field.name()) && !f.columns().isEmpty()) {
              notes.add("features.columns: '" + pattern + "' matched " + field.name() + " ("
                  + field.dataType().simpleString() + "), which is not numeric: skipped");
            }
          } else {
            problems.add("features.columns: column " + field.name() + " has type " + field.dataType().simpleString()
                + "; feature columns must be numeric (double, float, int, long, short, byte or decimal)");
          }
          continue;
        }
        if (glob && keys.contains(field.name())) {
          if (!f.columns().isEmpty()) {
            keysMatched.putIfAbsent(field.name(), pattern);
          }
          continue;
        }
        chosen.add(field.name());
      }
      if (matched == 0) {
        problems.add("features.columns: '" + pattern + "' matches no column of the input (columns: "
            + String.join(", ", schema.fieldNames()) + ")");
      }
    }
    for (String pattern : f.exclude()) {
      Pattern regex = globRegex(pattern);
      chosen.removeIf(name -> regex.matcher(name).matches());
      keysMatched.keySet().removeIf(name -> regex.matcher(name).matches());
    }
    keysMatched.forEach((key, pattern) -> warnings.add("features.columns: '" + pattern + "' matches " + key
        + ", which is in features.keys: " + key + " is used as a key only, not as a feature (add it to"
        + " features.exclude, or write features.columns so that no glob matches it, to silence this warning)"));
    List<StructField> out = new ArrayList<>();
    for (String name : chosen) {
      out.add(schema.apply(name));
    }
    return out;
  }

  static boolean isGlob(String pattern) {
    return io.eigenmill.settings.Globs.isGlob(pattern);
  }

  static Pattern globRegex(String glob) {
    return io.eigenmill.settings.Globs.regex(glob);
  }

  static boolean isNumeric(DataType type) {
    return type instanceof NumericType || type instanceof DecimalType;
  }

  private static List<String> partitionColumns(SparkSession spark, Dataset<Row> table, JobSettings settings) {
    if (settings.input().isLong()) {
      return LongTable.carried(spark, settings.input());
    }
    return TableLoader.partitionColumns(table, settings.input());
  }

  /**
   * What the footers of the files the scan reads (those {@code input.where} keeps) say: their rows, and each file's
   * length and row groups for the scan's splits ({@link ScanSplits}). Null when not cheap (more than
   * {@link #FOOTER_LIMIT} files, not Parquet) or when a footer cannot be read. Each footer is decoded once per run
   * (the input check's, kept by {@link FooterLayouts}).
   */
  private static Footers footers(SparkSession spark, Dataset<Row> table, InputSelection selection,
      JobSettings settings) {
    if (settings.input().format() != InputFormat.PARQUET) {
      return null;
    }
    String[] files = selection != null ? selection.files().toArray(String[]::new) : table.inputFiles();
    if (files.length > FOOTER_LIMIT
        || files.length == 0 && (settings.input().isLong() || settings.input().fromTable())) {
      return null;
    }
    Configuration conf = spark.sparkContext().hadoopConfiguration();
    long rows = 0;
    List<ScanSplits.FileLayout> layouts = new ArrayList<>();
    for (String file : files) {
      try {
        // decoded once per run: the input check has read every footer (FooterLayouts keeps what they say)
        FooterLayouts.Layout layout = FooterLayouts.read(conf, new Path(file));
        rows += layout.rows();
        layouts.add(new ScanSplits.FileLayout(layout.length(), layout.rowGroupStarts(), layout.rowGroupBytes()));
      } catch (Exception e) {
        return null;
      }
    }
    return new Footers(rows, layouts);
  }

  /** The rows of the files a scan reads and their layouts, from their footers. */
  private record Footers(long rows, List<ScanSplits.FileLayout> files) {}

  /** The splits of the scan of {@code columns} columns over the files {@code footers} describes. */
  private static ScanSplits splits(SparkSession spark, JobSettings settings, int columns, Footers footers) {
    if (settings.input().fromTable()) {
      return ScanSplits.unplanned(columns, "a catalog table's reader makes its own splits");
    }
    if (settings.input().isLong()) {
      return ScanSplits.unplanned(columns, "the pivoted rows are written once and read back as Spark splits them");
    }
    if (settings.input().format() != InputFormat.PARQUET) {
      return ScanSplits.unplanned(columns, "not a Parquet input");
    }
    if (footers == null) {
      return ScanSplits.unplanned(columns, "the footers were not read: more than " + FOOTER_LIMIT
          + " files, or one could not be read");
    }
    return ScanSplits.of(columns, footers.files(), slots(spark), splitConf(spark));
  }

  /** Tasks that run at once: Spark's default parallelism for a scan ({@code leafNodeDefaultParallelism}). */
  static int slots(SparkSession spark) {
    // optional settings: a default of "" would be checked against the setting's type, so getOption
    scala.Option<String> leaf = spark.conf().getOption("spark.sql.leafNodeDefaultParallelism");
    return leaf.isEmpty() ? spark.sparkContext().defaultParallelism() : Integer.parseInt(leaf.get().strip());
  }

  /** Spark's settings for the splits of a file scan, as the session holds them now. */
  static ScanSplits.SparkSplitConf splitConf(SparkSession spark) {
    var conf = spark.conf();
    long maxBytes = JavaUtils.byteStringAsBytes(conf.get("spark.sql.files.maxPartitionBytes", "128m"));
    long openCost = JavaUtils.byteStringAsBytes(conf.get("spark.sql.files.openCostInBytes", "4m"));
    scala.Option<String> min = conf.getOption("spark.sql.files.minPartitionNum");
    scala.Option<String> max = conf.getOption("spark.sql.files.maxPartitionNum");
    return new ScanSplits.SparkSplitConf(maxBytes, openCost, min.isEmpty() ? slots(spark)
        : Integer.parseInt(min.get().strip()), max.isEmpty() ? 0 : Integer.parseInt(max.get().strip()));
  }

  static List<String> outputs(JobSettings s) {
    List<String> out = new ArrayList<>(List.of("summary.json", "report.html"));
    if (s.apply().appliesModel()) {
      out.add("scores/");
      out.add("data-drift/");
      if (!s.apply().compareWith().isEmpty()) {
        out.add("drift/");
      }
    } else {
      out.addAll(List.of("components/", "spectrum/", "model/"));
      if (s.output().scores()) {
        out.add("scores/");
      }
    }
    if (s.output().reconstruction()) {
      out.add("reconstruction/");
      out.add("reconstruction-error/");
    }
    if (s.cluster().enabled()) {
      out.add("clusters/");
    }
    if (!s.apply().centroids().isEmpty()) {
      out.add("labels/");
      if (s.apply().labelRows()) {
        out.add("row-labels/ (entity centroids)");
      }
    }
    return out;
  }

  /** Half the driver heap: the rest is Spark's. */
  static long driverHeap(SparkSession spark) {
    boolean local = spark.sparkContext().isLocal();
    long heap = local ? Runtime.getRuntime().maxMemory()
        : JavaUtils.byteStringAsBytes(spark.conf().get("spark.driver.memory", "1g"));
    return heap / 2;
  }

  /** Half the executor heap divided by the tasks that run at once in one executor. */
  static long taskHeap(SparkSession spark) {
    var sc = spark.sparkContext();
    if (sc.isLocal()) {
      return Runtime.getRuntime().maxMemory() / 2 / Math.max(1, sc.defaultParallelism());
    }
    long heap = JavaUtils.byteStringAsBytes(spark.conf().get("spark.executor.memory", "1g"));
    int cores = Integer.parseInt(spark.conf().get("spark.executor.cores", "1"));
    return heap / 2 / Math.max(1, cores);
  }
}
