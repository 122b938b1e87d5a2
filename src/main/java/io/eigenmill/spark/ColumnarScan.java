package io.eigenmill.spark;

import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.catalyst.expressions.Attribute;
import org.apache.spark.sql.catalyst.expressions.NamedExpression;
import org.apache.spark.sql.execution.ColumnarToRowExec;
import org.apache.spark.sql.execution.FileSourceScanExec;
import org.apache.spark.sql.execution.InputAdapter;
import org.apache.spark.sql.execution.ProjectExec;
import org.apache.spark.sql.execution.SparkPlan;
import org.apache.spark.sql.execution.WholeStageCodegenExec;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import scala.collection.JavaConverters;

/**
 * The Parquet scan under a plain selection of columns, when Spark's vectorised reader serves it as columnar
 * batches: readers then take the batches ({@code executeColumnar()}) and skip the row conversion.
 *
 * <p>Only a plan made of the scan and operators that merely pass or reorder its columns (whole-stage code
 * generation, the columnar-to-row transition, a projection of plain attributes) qualifies: reading the scan
 * directly would skip anything else (a filter, a computed column, a union of several scans). A batch's columns are
 * the scan's output attributes in order: the data columns read, then the partition columns, whose constant values
 * the reader appends to each batch.
 */
final class ColumnarScan {
  private final SparkPlan scan;
  private final List<Attribute> output;

  private ColumnarScan(SparkPlan scan) {
    this.scan = scan;
    this.output = JavaConverters.seqAsJavaList(scan.output());
  }

  /** The columnar scan under {@code selection}, or null when its executed plan is anything else. */
  static ColumnarScan of(Dataset<Row> selection) {
    SparkPlan node = selection.queryExecution().executedPlan();
    while (true) {
      if (node instanceof FileSourceScanExec) {
        return node.supportsColumnar() ? new ColumnarScan(node) : null;
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
    for (int i = 0; i < output.size(); i++) {
      if (output.get(i).name().equals(name)) {
        return i;
      }
    }
    return -1;
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

  JavaRDD<ColumnarBatch> batches() {
    return scan.executeColumnar().toJavaRDD();
  }
}
