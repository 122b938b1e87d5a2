package io.eigenmill.engine;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RuntimeConfig;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.catalyst.expressions.Attribute;
import org.apache.spark.sql.catalyst.expressions.NamedExpression;
import org.apache.spark.sql.catalyst.plans.logical.LogicalPlan;
import org.apache.spark.sql.catalyst.plans.logical.Project;
import org.apache.spark.sql.execution.ColumnarToRowExec;
import org.apache.spark.sql.execution.FileSourceScanExec;
import org.apache.spark.sql.execution.InputAdapter;
import org.apache.spark.sql.execution.ProjectExec;
import org.apache.spark.sql.execution.QueryExecution;
import org.apache.spark.sql.execution.SparkPlan;
import org.apache.spark.sql.execution.WholeStageCodegenExec;
import org.apache.spark.sql.execution.adaptive.AdaptiveSparkPlanExec;
import org.apache.spark.sql.execution.columnar.InMemoryTableScanExec;
import org.apache.spark.sql.execution.datasources.v2.BatchScanExec;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import scala.collection.JavaConverters;

/**
 * The Parquet scan (or the scan of a table cached in memory) under a plain selection of columns, when Spark's
 * vectorised reader serves it as columnar batches: readers then take the batches ({@code executeColumnar()}) and
 * skip the row conversion. A cached table serves batches only when all its columns are of primitive types.
 *
 * <p>A catalog table's scan through Spark's data source API ({@code BatchScanExec}, e.g. an Iceberg table's) qualifies
 * too when its reader serves columnar batches: their vectors are the format's own (Arrow-backed for Iceberg, with no
 * array on the heap), so readers take the values through the vector's getters ({@link HeapColumns} finds no array)
 * and the pass stays columnar. The batch size of such a scan is the table's own setting.
 *
 * <p>Only a plan made of the scan and operators that merely pass or reorder its columns (whole-stage code
 * generation, the columnar-to-row transition, a projection of plain attributes) qualifies: reading the scan
 * directly would skip anything else (a filter, a computed column, a union of several scans). A batch's columns are
 * the scan's output attributes in order: the data columns read, then the partition columns, whose constant values
 * the reader appends to each batch.
 */
public final class ColumnarScan {
  static final String BATCH_SIZE_KEY = "spark.sql.parquet.columnarReaderBatchSize";
  /** Values per columnar batch at most for wide scans: 4 Mi doubles, 32 MiB. */
  static final long BATCH_VALUES = 4L << 20;
  static final long MIN_BATCH_ROWS = 64;
  static final String SPLIT_BYTES_KEY = "spark.sql.files.maxPartitionBytes";
  static final String MIN_SPLITS_KEY = "spark.sql.files.minPartitionNum";
  /**
   * Spark's vectorised Parquet reader serves batches only to a scan of at most this many fields (data and partition
   * columns; Spark's default 100), a limit meant for whole-stage code generation over rows.
   */
  static final String MAX_FIELDS_KEY = "spark.sql.codegen.maxFields";

  private final SparkSession session;
  private final SparkPlan scan;
  /** The scan's output attributes, copied once: Scala's list wrapper is a linked list (get and size are O(d)). */
  private final List<Attribute> output;
  /** Column name to its first position in a batch. */
  private final Map<String, Integer> positions = new HashMap<>();

  private ColumnarScan(SparkSession session, SparkPlan scan) {
    this.session = session;
    this.scan = scan;
    this.output = new ArrayList<>(JavaConverters.seqAsJavaList(scan.output()));
    for (int i = 0; i < output.size(); i++) {
      positions.putIfAbsent(output.get(i).name(), i);
    }
  }

  /**
   * The columnar scan under {@code selection}, or null when its executed plan is anything else.
   *
   * <p>Spark serves a Parquet scan as batches only when it reads at most {@code spark.sql.codegen.maxFields} fields
   * (default 100: 100 metrics read from a table partitioned by day are 101). That limit guards the code generated
   * over rows, which a columnar reader here never runs, so the selection is planned with the limit raised to the
   * fields its relations hold ({@link #planWithFields}; the session's own setting is restored at once) and
   * {@link #batches} raises it again while the scan builds its reader. {@code selection} should be a fresh
   * selection: a plan Spark has already made is kept as it was made.
   */
  public static ColumnarScan of(Dataset<Row> selection) {
    return of(selection.queryExecution(), selection.sparkSession());
  }

  /**
   * The columnar scan under the selection of {@code columns} from {@code table}: {@link #of}({@code table.select}) of
   * the columns, planned without making that selection a Dataset. Spark builds a Dataset's row encoder at once, with
   * a serializer and a deserializer expression per column, and resolves a selection's columns by name: at 20,000
   * columns that took 1.5-1.8 s (warm) of opening a fit's input, for a plan the reader never runs row by row. Here the
   * table's analysed columns are projected directly. A column that is not one of the table's columns by its exact
   * name, or whose name the table holds twice in any case, takes {@code table.select} as before.
   */
  public static ColumnarScan select(Dataset<Row> table, List<String> columns) {
    LogicalPlan analyzed = table.queryExecution().analyzed();
    Map<String, Attribute> byName = new HashMap<>();
    Set<String> folded = new HashSet<>();
    Set<String> twice = new HashSet<>();
    scala.collection.Iterator<Attribute> out = analyzed.output().iterator();
    while (out.hasNext()) {
      Attribute a = out.next();
      byName.put(a.name(), a);
      if (!folded.add(a.name().toLowerCase(Locale.ROOT))) {
        twice.add(a.name().toLowerCase(Locale.ROOT));
      }
    }
    List<NamedExpression> picked = new ArrayList<>(columns.size());
    for (String c : columns) {
      Attribute a = byName.get(c);
      if (a == null || twice.contains(c.toLowerCase(Locale.ROOT))) {
        return of(table.select(columns.stream().map(functions::col).toArray(Column[]::new)));
      }
      picked.add(a);
    }
    Project project = new Project(JavaConverters.asScalaBuffer(picked).toList(), analyzed);
    return of(SparkLine.executePlan(table.sparkSession(), project), table.sparkSession());
  }

  private static ColumnarScan of(QueryExecution selection, SparkSession session) {
    SparkPlan node = planWithFields(selection, session);
    while (true) {
      if (node instanceof AdaptiveSparkPlanExec) {
        // adaptive execution wraps plans over cached tables; without an exchange below (none of the nodes that
        // qualify is one) its current plan is the one that runs
        node = ((AdaptiveSparkPlanExec) node).executedPlan();
        continue;
      }
      if (node instanceof FileSourceScanExec || node instanceof InMemoryTableScanExec
          || node instanceof BatchScanExec) {
        return node.supportsColumnar() ? new ColumnarScan(session, node) : null;
      }
      boolean passes = node instanceof WholeStageCodegenExec || node instanceof InputAdapter
          || node instanceof ColumnarToRowExec || (node instanceof ProjectExec && plainAttributes((ProjectExec) node));
      if (!passes || node.children().size() != 1) {
        return null;
      }
      node = node.children().head();
    }
  }

  /**
   * The executed plan of {@code selection}, made with {@code spark.sql.codegen.maxFields} at least the number of
   * columns its relations output (an upper bound of the fields its scan reads, partition columns included).
   */
  private static SparkPlan planWithFields(QueryExecution selection, SparkSession session) {
    long fields = 0;
    scala.collection.Iterator<LogicalPlan> leaves = selection.analyzed().collectLeaves().iterator();
    while (leaves.hasNext()) {
      fields += leaves.next().output().size();
    }
    RuntimeConfig conf = session.conf();
    return SessionSettings.with(conf, raisedFields(conf, fields), selection::executedPlan);
  }

  /** {@link #MAX_FIELDS_KEY} raised to {@code fields} when the session's value is lower; else nothing. */
  private static Map<String, String> raisedFields(RuntimeConfig conf, long fields) {
    Map<String, String> raised = new LinkedHashMap<>();
    String current = conf.get(MAX_FIELDS_KEY, "100");
    if (fields > Long.parseLong(current.strip())) {
      raised.put(MAX_FIELDS_KEY, Long.toString(fields));
    }
    return raised;
  }

  private static boolean plainAttributes(ProjectExec project) {
    for (NamedExpression e : JavaConverters.seqAsJavaList(project.projectList())) {
      if (!(e instanceof Attribute)) {
        return false;
      }
    }
    return true;
  }

  /** The position of column {@code name} in a batch, or -1. */
  int ordinal(String name) {
    return positions.getOrDefault(name, -1);
  }

  /** The positions of {@code names} in a batch, or null when one is missing. */
  public int[] ordinals(List<String> names) {
    int[] ord = new int[names.size()];
    for (int j = 0; j < ord.length; j++) {
      ord[j] = ordinal(names.get(j));
      if (ord[j] < 0) {
        return null;
      }
    }
    return ord;
  }

  /** The value-kind codes ({@link ValueKinds}) of the columns at {@code ordinals}; -1 for a non-numeric one. */
  public int[] kinds(int[] ordinals) {
    int[] k = new int[ordinals.length];
    for (int j = 0; j < k.length; j++) {
      k[j] = ValueKinds.kindOf(type(ordinals[j]));
    }
    return k;
  }

  DataType type(int ordinal) {
    return output.get(ordinal).dataType();
  }

  /** The scan's batches in Spark's own splits ({@link #batches(long)} with 0). */
  public JavaRDD<ColumnarBatch> batches() {
    return batches(0);
  }

  /**
   * The scan's batches, read with settings adapted to wide scans while the scan builds its reader and its splits
   * (it takes them then; the session's own settings are restored at once, so a caller's session is left as it was):
   *
   * <ul>
   *   <li>Batch rows. Spark's vectorised reader allocates, per task, one vector of
   *       {@code spark.sql.parquet.columnarReaderBatchSize} rows (default 4096) for every column it reads: at
   *       d = 20,000 that is 655 MB per task, which a 4 GiB executor spends its time collecting (measured: a pass over
   *       10,000 rows took 63 s). For wide scans the batch is cut to at most {@link #BATCH_VALUES} values (never below
   *       {@link #MIN_BATCH_ROWS} rows).
   *   <li>Split bytes. When {@code splitBytes} is positive (the plan's choice for a wide Parquet scan, see
   *       {@code plan.ScanSplits}), a file scan's splits are at most that size:
   *       {@code spark.sql.files.maxPartitionBytes} set to it and {@code spark.sql.files.minPartitionNum} to 1, so
   *       that Spark does not cap it again at the input's bytes per core. Other scans (a cached table, a catalog
   *       table's reader) make their own splits.
   *   <li>Fields. {@code spark.sql.codegen.maxFields} at least the scan's columns (see {@link #of}).
   * </ul>
   *
   * @param splitBytes the split size of a file scan, or 0 for Spark's own
   */
  public JavaRDD<ColumnarBatch> batches(long splitBytes) {
    RuntimeConfig conf = session.conf();
    Map<String, String> wide = new LinkedHashMap<>();
    long askedRows = Long.parseLong(conf.get(BATCH_SIZE_KEY, "4096"));
    long fits = Math.max(MIN_BATCH_ROWS, BATCH_VALUES / Math.max(1, output.size()));
    if (fits < askedRows) {
      wide.put(BATCH_SIZE_KEY, Long.toString(fits));
    }
    if (splitBytes > 0 && scan instanceof FileSourceScanExec) {
      wide.put(SPLIT_BYTES_KEY, Long.toString(splitBytes));
      wide.put(MIN_SPLITS_KEY, "1");
    }
    // the reader checks again that it may serve batches for this many fields (see of)
    wide.putAll(raisedFields(conf, output.size()));
    return SessionSettings.with(conf, wide, () -> scan.executeColumnar().toJavaRDD());
  }
}
