package io.eigenmill.spark;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RuntimeConfig;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.catalyst.expressions.Attribute;
import org.apache.spark.sql.catalyst.expressions.NamedExpression;
import org.apache.spark.sql.execution.ColumnarToRowExec;
import org.apache.spark.sql.execution.FileSourceScanExec;
import org.apache.spark.sql.execution.InputAdapter;
import org.apache.spark.sql.execution.ProjectExec;
import org.apache.spark.sql.execution.SparkPlan;
import org.apache.spark.sql.execution.WholeStageCodegenExec;
import org.apache.spark.sql.execution.adaptive.AdaptiveSparkPlanExec;
import org.apache.spark.sql.execution.columnar.InMemoryTableScanExec;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import scala.collection.JavaConverters;

/**
 * The Parquet scan (or the scan of a table cached in memory) under a plain selection of columns, when Spark's
 * vectorised reader serves it as columnar batches: readers then take the batches ({@code executeColumnar()}) and
 * skip the row conversion. A cached table serves batches only when all its columns are of primitive types.
 *
 * <p>Only a plan made of the scan and operators that merely pass or reorder its columns (whole-stage code
 * generation, the columnar-to-row transition, a projection of plain attributes) qualifies: reading the scan
 * directly would skip anything else (a filter, a computed column, a union of several scans). A batch's columns are
 * the scan's output attributes in order: the data columns read, then the partition columns, whose constant values
 * the reader appends to each batch.
 */
final class ColumnarScan {
  static final String BATCH_SIZE_KEY = "spark.sql.parquet.columnarReaderBatchSize";
  /** Values per columnar batch at most for wide scans: 4 Mi doubles, 32 MiB. */
  static final long BATCH_VALUES = 4L << 20;
  static final long MIN_BATCH_ROWS = 64;

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

  /** The columnar scan under {@code selection}, or null when its executed plan is anything else. */
  static ColumnarScan of(Dataset<Row> selection) {
    SparkPlan node = selection.queryExecution().executedPlan();
    while (true) {
      if (node instanceof AdaptiveSparkPlanExec) {
        // adaptive execution wraps plans over cached tables; without an exchange below (none of the nodes that
        // qualify is one) its current plan is the one that runs
        node = ((AdaptiveSparkPlanExec) node).executedPlan();
        continue;
      }
      if (node instanceof FileSourceScanExec || node instanceof InMemoryTableScanExec) {
        return node.supportsColumnar() ? new ColumnarScan(selection.sparkSession(), node) : null;
      }
      boolean passes = node instanceof WholeStageCodegenExec || node instanceof InputAdapter
          || node instanceof ColumnarToRowExec || (node instanceof ProjectExec && plainAttributes((ProjectExec) node));
      if (!passes || node.children().size() != 1) {
        return null;
      }
      node = node.children().head();
    }
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
  int[] ordinals(List<String> names) {
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
  int[] kinds(int[] ordinals) {
    int[] k = new int[ordinals.length];
    for (int j = 0; j < k.length; j++) {
      k[j] = ValueKinds.kindOf(type(ordinals[j]));
    }
    return k;
  }

  DataType type(int ordinal) {
    return output.get(ordinal).dataType();
  }

  /**
   * The scan's batches. Spark's vectorised reader allocates, per task, one vector of
   * {@code spark.sql.parquet.columnarReaderBatchSize} rows (default 4096) for every column it reads: at d = 20,000
   * that is 655 MB per task, which a 4 GiB executor spends its time collecting (measured: a pass over 10,000 rows
   * took 63 s). For wide scans the batch is therefore cut to at most {@link #BATCH_VALUES} values (never below
   * {@link #MIN_BATCH_ROWS} rows) while the scan builds its reader (the reader takes the size then); the session's
   * own setting is restored at once.
   */
  JavaRDD<ColumnarBatch> batches() {
    RuntimeConfig conf = session.conf();
    long asked = Long.parseLong(conf.get(BATCH_SIZE_KEY, "4096"));
    long fits = Math.max(MIN_BATCH_ROWS, BATCH_VALUES / Math.max(1, output.size()));
    if (fits >= asked) {
      return scan.executeColumnar().toJavaRDD();
    }
    boolean wasSet = conf.contains(BATCH_SIZE_KEY);
    String before = wasSet ? conf.get(BATCH_SIZE_KEY) : null;
    conf.set(BATCH_SIZE_KEY, fits);
    try {
      return scan.executeColumnar().toJavaRDD();
    } finally {
      if (wasSet) {
        conf.set(BATCH_SIZE_KEY, before);
      } else {
        conf.unset(BATCH_SIZE_KEY);
      }
    }
  }
}
