package io.eigenmill.plan;

import io.eigenmill.engine.ColumnarScan;
import io.eigenmill.engine.SparkLine;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import org.apache.hadoop.fs.Path;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.catalyst.expressions.Attribute;
import org.apache.spark.sql.execution.FileSourceScanExec;
import org.apache.spark.sql.execution.SparkPlan;
import org.apache.spark.sql.execution.adaptive.AdaptiveSparkPlanExec;
import org.apache.spark.sql.functions;
import scala.collection.JavaConverters;

/**
 * What {@code input.where} keeps of the input, from Spark's own planning of the filtered table (no data read): the
 * partition folders and files its Parquet scan reads after partition pruning, out of all of them, the data columns
 * the predicate also filters on (Parquet row-group filters, then Spark's row filter above the scan), and whether the
 * passes still read the scan's columnar batches.
 *
 * @param where the predicate
 * @param partitions the partition folders kept, relative to {@code input.path} ({@code date=2026-11-02}); empty
 *     when the input is not partitioned or has no file scan
 * @param totalPartitions partition folders of the unfiltered input, or -1 when unknown
 * @param files the data files the scan reads after pruning
 * @param totalFiles data files of the unfiltered input, or -1 when unknown
 * @param dataColumns the non-partition columns the predicate names (filtered row by row after the scan)
 * @param columnar true when the passes over the filtered input read columnar batches
 * @param columnarUnfiltered true when the passes over the unfiltered input would read columnar batches
 */
public record InputSelection(
    String where,
    List<String> partitions,
    int totalPartitions,
    List<String> files,
    int totalFiles,
    List<String> dataColumns,
    boolean columnar,
    boolean columnarUnfiltered) {

  /** Partition folders listed by name in the plan at most; beyond, the first ones and a count. */
  static final int SHOWN = 12;

  /**
   * The selection of {@code filtered} (= {@code table} filtered by {@code where}) for the given features. Cost: the
   * planning of both tables (the file listing Spark caches for the input); no data is read.
   */
  public static InputSelection of(Dataset<Row> table, Dataset<Row> filtered, String where, String root,
      List<String> features, List<String> partitionColumns) {
    FileSourceScanExec all = fileScan(table.queryExecution().executedPlan());
    FileSourceScanExec kept = fileScan(filtered.queryExecution().executedPlan());
    List<String> partitions = new ArrayList<>();
    List<String> files = new ArrayList<>();
    if (kept != null) {
      String base = new Path(root).toUri().getPath();
      for (List<Path> in : SparkLine.selectedFiles(kept)) {
        for (Path f : in) {
          files.add(f.toString());
        }
        if (!partitionColumns.isEmpty() && !in.isEmpty()) {
          partitions.add(relative(base, in.get(0).getParent()));
        }
      }
    }
    // in folder order on every line (Spark 4 lists the selected partitions in no fixed order)
    partitions.sort(null);
    files.sort(null);
    List<List<Path>> unfiltered = all == null ? null : SparkLine.selectedFiles(all);
    int totalPartitions = all == null || partitionColumns.isEmpty() ? -1 : unfiltered.size();
    int totalFiles = -1;
    if (all != null) {
      totalFiles = 0;
      for (List<Path> in : unfiltered) {
        totalFiles += in.size();
      }
    }
    Set<String> dataColumns = new LinkedHashSet<>();
    for (Attribute a : JavaConverters.seqAsJavaList(
        table.select(functions.expr(where)).queryExecution().analyzed().references().toSeq())) {
      if (!partitionColumns.contains(a.name())) {
        dataColumns.add(a.name());
      }
    }
    boolean columnar = !features.isEmpty() && ColumnarScan.select(filtered, features) != null;
    boolean columnarUnfiltered = !features.isEmpty() && ColumnarScan.select(table, features) != null;
    return new InputSelection(where, List.copyOf(partitions), totalPartitions, List.copyOf(files), totalFiles,
        List.copyOf(dataColumns), columnar, columnarUnfiltered);
  }

  /** The lines {@code plan} prints under the input: label and text. */
  public List<String[]> describe() {
    List<String[]> lines = new ArrayList<>();
    lines.add(new String[] {"where", where});
    if (totalPartitions >= 0) {
      List<String> shown = partitions.size() <= SHOWN ? partitions : partitions.subList(0, SHOWN);
      lines.add(new String[] {"partitions kept", partitions.size() + " of " + totalPartitions
          + (partitions.isEmpty() ? "" : ": " + String.join(", ", shown))
          + (partitions.size() > SHOWN ? ", ... (" + (partitions.size() - SHOWN) + " more)" : "")});
    }
    if (totalFiles >= 0) {
      lines.add(new String[] {"files kept", files.size() + " of " + totalFiles});
    }
    if (!dataColumns.isEmpty()) {
      String how = columnar ? "pushed into the scan; the passes still read its columnar batches"
          : columnarUnfiltered ? "Spark skips Parquet row groups by their statistics and filters the rows above the"
              + " scan, so the passes read rows, not the scan's columnar batches"
          : "Spark filters the rows as it reads them (the passes read rows, as for this input unfiltered)";
      lines.add(new String[] {"row filter", "on data column" + (dataColumns.size() > 1 ? "s " : " ")
          + String.join(", ", dataColumns) + ": " + how
          + (columnar || columnarUnfiltered ? "; the row estimate counts the kept files' rows before this filter"
              : "")});
    }
    return lines;
  }

  private static String relative(String base, Path folder) {
    String p = folder.toUri().getPath();
    int at = p.indexOf(base);
    String rest = at >= 0 ? p.substring(at + base.length()) : p;
    return rest.startsWith("/") ? rest.substring(1) : rest;
  }

  /** The Parquet file scan under {@code node}, or null (CSV scans are file scans too). */
  static FileSourceScanExec fileScan(SparkPlan node) {
    if (node instanceof AdaptiveSparkPlanExec adaptive) {
      return fileScan(adaptive.executedPlan());
    }
    if (node instanceof FileSourceScanExec scan) {
      return scan;
    }
    for (SparkPlan child : JavaConverters.seqAsJavaList(node.children())) {
      FileSourceScanExec found = fileScan(child);
      if (found != null) {
        return found;
      }
    }
    return null;
  }
}
