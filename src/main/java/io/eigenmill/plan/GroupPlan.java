package io.eigenmill.plan;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyedPasses;
import java.util.List;
import java.util.Locale;

/**
 * One model per group ({@code reduce.group-by}): the group columns, the fewest rows a group needs for a model, and
 * the memory limits that decide where the groups' summaries merge and their eigenproblems are solved.
 *
 * @param by the group columns and their types
 * @param minRows groups with fewer usable rows get no model
 * @param summaryBytes one group's summary (8 d^2 bytes: the co-moments or the R factor)
 * @param blockBytes one group's block in a task at full size ({@code reduce.block-rows} x (d + 1) doubles)
 * @param driverBudget bytes the driver may hold in partials (a quarter of its heap share): groups are merged and
 *     solved on the driver while partitions x groups x summaryBytes stays below it, on the executors beyond
 * @param taskBudget bytes a task may spend on its groups' blocks: the first taskBudget / blockBytes groups a task
 *     meets get full blocks, later ones smaller blocks (at least {@link #MIN_BLOCK_ROWS} rows)
 */
public record GroupPlan(KeyColumns by, long minRows, long summaryBytes, long blockBytes, long driverBudget,
    long taskBudget) {

  /** Groups per job at most (each a model, a row of every output table and of the summary). */
  public static final int MAX_GROUPS = 100_000;
  /** Rows of a group's block when many groups share a task. */
  public static final int MIN_BLOCK_ROWS = 32;

  /** Groups a task gives full blocks (at least one). */
  public int fullKeys() {
    return (int) Math.max(1, Math.min(Integer.MAX_VALUE, taskBudget / Math.max(1, blockBytes)));
  }

  /** True when {@code groups} groups over {@code partitions} partitions merge and solve on the driver. */
  public boolean onDriver(long groups, int partitions) {
    return (double) groups * Math.max(1, partitions) * summaryBytes <= driverBudget;
  }

  List<String[]> describe(int d) {
    long perDriver = driverBudget / Math.max(1, summaryBytes);
    return List.<String[]>of(new String[] {"groups", String.format(Locale.ROOT, "one model per value of %s (groups"
        + " with fewer than %,d usable rows get none); a group's summary takes %s: merged and solved on the driver"
        + " while partitions x groups <= %,d (%s), on the executors beyond; a task gives full blocks (%s each) to"
        + " the first %,d groups it meets, smaller ones to the rest, and holds up to %,d decoded rows of mixed"
        + " groups (%s) before handing each group its rows", String.join(", ", by.names()), minRows,
        MemoryEstimate.human(summaryBytes), perDriver, MemoryEstimate.human(driverBudget),
        MemoryEstimate.human(blockBytes), fullKeys(), KeyedPasses.scratchRows(d),
        MemoryEstimate.human(8L * d * KeyedPasses.scratchRows(d)))});
  }
}
