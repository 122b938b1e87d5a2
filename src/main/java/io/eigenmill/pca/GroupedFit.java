package io.eigenmill.pca;

import io.eigenmill.engine.FeatureInput;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.engine.KeyedPasses;
import io.eigenmill.engine.PartialResult;
import io.eigenmill.engine.ReadCounts;
import io.eigenmill.engine.ReadMode;
import io.eigenmill.engine.SummaryAggregator;
import io.eigenmill.math.BlockPrep;
import io.eigenmill.math.BlockSummary;
import io.eigenmill.math.Moments;
import io.eigenmill.pca.math.RFactor;
import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.plan.GroupPlan;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.InvalidJobException;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import org.apache.spark.api.java.function.Function;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;
import scala.Tuple2;

/**
 * One model per group in one pass ({@code reduce.group-by}). First the rows of each group are counted (a Spark
 * aggregation over the group columns alone), so that groups too small for a model are known before the pass and
 * left out of it, and so that the number of groups decides where they are solved. Then one keyed pass keeps a
 * summary per group per partition (the covariance method's moments or TSQR's R factor), plus a pooled summary of
 * every row; the summaries merge per group in the tree an unkeyed pass over the group's rows would use, and each
 * group's eigenproblem is solved by the same {@link ModelSolver} as a single model: on the driver when the groups'
 * partials fit there ({@link GroupPlan#onDriver}), otherwise on the executors, which send back only the models.
 */
final class GroupedFit {
  private static final Logger LOG = LoggerFactory.getLogger(GroupedFit.class);

  private GroupedFit() {}

  /**
   * The outcome of a grouped pass.
   *
   * @param groups every group, the skipped ones too, by rows read (descending), then by key
   * @param pooled the model of all rows (the groups' and the skipped groups' rows)
   * @param onDriver whether the groups were solved on the driver (else on the executors)
   */
  record Outcome(List<GroupFit> groups, GroupFit pooled, ReadCounts total, boolean onDriver) {}

  static Outcome run(FeatureInput input, GroupPlan plan, ModelSolver solver, ReadMode mode, BlockPrep prep,
      int blockRows) {
    int d = solver.features().size();
    Map<KeyValues, Long> counts = input.countKeys(plan.by());
    if (counts == null) {
      counts = countRows(input.table(), plan);
    }
    if (counts.size() > GroupPlan.MAX_GROUPS) {
      throw new InvalidJobException("reduce.group-by = " + plan.by().names() + ": the input has " + counts.size()
          + " groups, more than " + GroupPlan.MAX_GROUPS + " (one model each); group by fewer or coarser columns");
    }
    Set<KeyValues> small = new HashSet<>();
    counts.forEach((k, n) -> {
      if (n < plan.minRows()) {
        small.add(k);
      }
    });
    int kept = counts.size() - small.size();
    int smallRows = (int) Math.max(GroupPlan.MIN_BLOCK_ROWS, Math.min(blockRows,
        plan.taskBudget() / (8L * (d + 1) * Math.max(1, kept))));
    boolean rFactor = solver.method() == Method.TSQR;
    int partitions = input.table().rdd().getNumPartitions();
    long keptRows = 0;
    for (Map.Entry<KeyValues, Long> e : counts.entrySet()) {
      keptRows += small.contains(e.getKey()) ? 0 : e.getValue();
    }
    var routing = new KeyedPasses.Routing(plan.fullKeys(), smallRows, small, true,
        firstRows(keptRows, kept, partitions));
    Solve finish = new Solve(solver, plan.minRows());
    boolean onDriver = plan.onDriver(kept + 1L, partitions);
    LOG.info("fit: {} groups of {} ({} below reduce.min-group-rows = {}), solved on the {}", counts.size(),
        String.join(", ", plan.by().names()), small.size(), plan.minRows(), onDriver ? "driver" : "executors");
    List<GroupFit> fits = rFactor ? pass(input, RFactor.factory(d), mode, prep, plan, blockRows, routing, finish,
        onDriver, partitions, kept) : pass(input, Moments.factory(d, true), mode, prep, plan, blockRows, routing,
        finish, onDriver, partitions, kept);
    GroupFit pooled = null;
    List<GroupFit> groups = new ArrayList<>();
    Set<KeyValues> seen = new HashSet<>();
    for (GroupFit g : fits) {
      if (g.key().equals(KeyedPasses.POOLED)) {
        pooled = g;
      } else {
        groups.add(g);
        seen.add(g.key());
      }
    }
    for (KeyValues k : small) {
      long n = counts.get(k);
      groups.add(GroupFit.skipped(k, n, 0, new long[d], n + " rows, fewer than reduce.min-group-rows = "
          + plan.minRows()));
    }
    counts.forEach((k, n) -> {
      if (!small.contains(k) && !seen.contains(k)) {
        // counted by the aggregation but met by no task: cannot happen unless the input changed between the two
        throw new IllegalStateException("group " + k.display(plan.by().names()) + " was counted (" + n
            + " rows) but not read: did the input change during the run?");
      }
    });
    groups.sort(Comparator.comparingLong(GroupFit::rowsRead).reversed().thenComparing(g -> String.valueOf(
        g.key().texts())));
    if (pooled == null) {
      throw new InvalidJobException("input.path: the table has no rows" + (counts.isEmpty() ? "" : " left"));
    }
    ReadCounts total = ReadCounts.of(pooled.rowsRead(), pooled.rowsRead() - pooled.rowsUsed(),
        pooled.missingCells());
    return new Outcome(groups, pooled, total, onDriver);
  }

  private static <S extends BlockSummary<S>> List<GroupFit> pass(FeatureInput input, BlockSummary.Factory<S> factory,
      ReadMode mode, BlockPrep prep, GroupPlan plan, int blockRows, KeyedPasses.Routing routing, Solve finish,
      boolean onDriver, int partitions, int kept) {
    SummaryAggregator<S> aggregator = new SummaryAggregator<>(factory);
    if (onDriver) {
      var result = input.runKeyed("fit/groups", aggregator, mode, prep, plan.by(), blockRows, routing);
      List<GroupFit> out = new ArrayList<>();
      for (Map.Entry<KeyValues, PartialResult<S>> e : result.byKey().entrySet()) {
        out.add(finish.call(e.getKey(), e.getValue()));
      }
      return out;
    }
    return input.runKeyedOnExecutors("fit/groups", aggregator, mode, prep, plan.by(), blockRows, routing,
        new SolveOnExecutor<S>(finish), reducers(plan.summaryBytes(), kept, partitions,
            input.table().sparkSession().sparkContext().defaultParallelism()));
  }

  /**
   * Rows a group's block allocates at first in a task: a quarter more than a group's rows in a task if groups and
   * rows spread evenly over the partitions ({@code rows / (groups x partitions)}), at least 64 (the blocks' own
   * start). Blocks still grow where a task has more of a group, and never exceed their capacity; a guess too low
   * costs a copy, never a different result (a block's rows and sums do not depend on its allocation).
   */
  static int firstRows(long rows, int groups, int partitions) {
    double each = (double) rows / Math.max(1, groups) / Math.max(1, partitions);
    return (int) Math.max(64, Math.min(1 << 20, Math.ceil(1.25 * each)));
  }

  /** Bytes of partials one merge task holds at most (they are held whole while a key's partials are gathered). */
  static final long REDUCER_BYTES = 64L << 20;

  /**
   * Merge tasks of the executors' path: a merge task holds all partials of its keys at once (each key's partials
   * from every partition), so the keys are spread until a task holds about {@link #REDUCER_BYTES}: at 10,000 groups
   * of d = 100 over 14 partitions, 11 GB of partials in 168 tasks instead of 5.6 GB in each of 2.
   */
  static int reducers(long summaryBytes, long groups, int partitions, int parallelism) {
    double bytes = (double) Math.max(1, partitions) * (groups + 1) * summaryBytes;
    long tasks = (long) Math.ceil(bytes / REDUCER_BYTES);
    return (int) Math.max(Math.max(1, parallelism), Math.min(100_000, tasks));
  }

  /**
   * Rows per group where the group columns have no columnar scan ({@link FeatureInput#countKeys} otherwise), from a
   * Spark aggregation over the group columns, each group's values then cast to text (the keys' text). Grouping the
   * columns as they are, not their text, spares a cast and a string hash per row; Spark's grouping treats -0.0 and
   * 0.0 as one value, as the keyed pass does.
   */
  private static Map<KeyValues, Long> countRows(Dataset<Row> table, GroupPlan plan) {
    List<Column> raw = new ArrayList<>();
    List<Column> cols = new ArrayList<>();
    for (String c : plan.by().names()) {
      raw.add(functions.col(c));
      cols.add(functions.col(c).cast("string"));
    }
    // the count's own name: no group column has it (model/ has a column rows, so the planner refuses the name)
    String rows = "rows";
    cols.add(functions.col(rows));
    Map<KeyValues, Long> counts = new java.util.LinkedHashMap<>();
    for (Row r : table.groupBy(raw.toArray(Column[]::new)).agg(functions.count(functions.lit(1)).as(rows))
        .select(cols.toArray(Column[]::new)).collectAsList()) {
      List<String> texts = new ArrayList<>();
      for (int i = 0; i < cols.size() - 1; i++) {
        String t = r.isNullAt(i) ? null : r.getString(i);
        texts.add("-0.0".equals(t) ? "0.0" : t);
      }
      counts.merge(new KeyValues(texts), r.getLong(cols.size() - 1), Long::sum);
    }
    return counts;
  }

  /** A group's merged summary to its model (or the reason it has none). */
  record Solve(ModelSolver solver, long minRows) implements Serializable {
    GroupFit call(KeyValues key, PartialResult<? extends BlockSummary<?>> merged) {
      ReadCounts c = merged.counts();
      Object value = merged.value();
      Moments moments = value instanceof Moments m ? m : null;
      RFactor r = value instanceof RFactor f ? f : null;
      long used = moments != null ? moments.count() : r.count();
      boolean pooled = key.equals(KeyedPasses.POOLED);
      if (!pooled && used < minRows) {
        return GroupFit.skipped(key, c.rowsRead(), used, c.missingCells(), used + " usable rows (" + c.rowsRead()
            + " read), fewer than reduce.min-group-rows = " + minRows);
      }
      if (used < 2) {
        return GroupFit.skipped(key, c.rowsRead(), used, c.missingCells(), used + " usable rows; a PCA needs 2");
      }
      try {
        ModelSolver.Solved s = solver.solve(moments, r);
        if (!pooled) {
          s = trimmed(s);
        }
        return new GroupFit(key, c.rowsRead(), used, c.missingCells(), s, null);
      } catch (InvalidJobException e) {
        if (pooled) {
          throw e;
        }
        return GroupFit.skipped(key, c.rowsRead(), used, c.missingCells(), e.getMessage());
      }
    }

    /** A group's solution with the k kept loadings only: the rest is never used, and groups can be many. */
    private static ModelSolver.Solved trimmed(ModelSolver.Solved s) {
      Spectrum sp = s.spectrum();
      int keep = sp.d() * s.model().k();
      double[] loadings = java.util.Arrays.copyOf(sp.loadings(), keep);
      return new ModelSolver.Solved(s.model(), new Spectrum(sp.d(), sp.eigenvalues(), loadings,
          sp.totalVariance()), s.dropped(), s.kRule(), s.warnings());
    }
  }

  /** {@link Solve} as the executors' finisher. */
  static final class SolveOnExecutor<S extends BlockSummary<S>>
      implements Function<Tuple2<KeyValues, PartialResult<S>>, GroupFit> {
    private static final long serialVersionUID = 1L;
    private final Solve solve;

    SolveOnExecutor(Solve solve) {
      this.solve = solve;
    }

    @Override
    public GroupFit call(Tuple2<KeyValues, PartialResult<S>> t) {
      return solve.call(t._1(), t._2());
    }
  }
}
