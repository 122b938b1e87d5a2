package io.eigenmill.plan;

import io.eigenmill.settings.JobSettings;
import java.util.List;
import java.util.Locale;

/**
 * The names {@code scores/} writes after the columns it carries (the keys, the group columns and the input's
 * partition columns): one column per component, {@code pc_1}, {@code pc_2}, ..., then {@code t2}, {@code q},
 * {@code flag_t2} and {@code flag_q}. A carried column with one of these names would make the table hold two columns
 * of one name (Spark refuses that when the scores are written, after the fit's pass), so the planner refuses it first.
 * Spark's column names match without regard to case.
 */
public final class ScoreColumns {
  private ScoreColumns() {}

  public static final String T2 = "t2";
  public static final String Q = "q";
  public static final String FLAG_T2 = "flag_t2";
  public static final String FLAG_Q = "flag_q";

  /** The columns after the carried ones and the components, in the order scores/ writes them. */
  static final List<String> FIXED = List.of(T2, Q, FLAG_T2, FLAG_Q);

  /** The name of component {@code c} (from 1) in scores/. */
  public static String component(int c) {
    return "pc_" + c;
  }

  /** Whether scores/ writes a column named {@code name}. */
  static boolean taken(String name) {
    String lower = name.toLowerCase(Locale.ROOT);
    return FIXED.contains(lower) || lower.matches("pc_[0-9]+");
  }

  /**
   * Adds a problem for each carried column with a name scores/ writes, when the job writes scores/.
   *
   * @param keys the resolved {@code features.keys}
   * @param partitionColumns the input's partition columns
   */
  static void check(JobSettings settings, List<String> keys, List<String> partitionColumns, List<String> problems) {
    if (!Planner.outputs(settings).contains("scores/")) {
      return;
    }
    String rule = "scores/ writes pc_1, pc_2, ... (one per component), t2, q, flag_t2 and flag_q after the columns it"
        + " carries";
    refuseKeys(keys, ScoreColumns::taken, rule, problems);
    if (settings.reduce().grouped()) {
      for (String g : settings.reduce().groupBy()) {
        if (taken(g)) {
          problems.add("reduce.group-by = " + settings.reduce().groupBy() + ": column " + g + " has the name of a"
              + " column that " + rule + "; group by a copy of it under another name");
        }
      }
    }
    for (String p : partitionColumns) {
      if (taken(p) && !keys.contains(p)) {
        problems.add("input.path: partition column " + p + " has the name of a column that " + rule
            + " (the input's partition columns among them); rename the partition column");
      }
    }
  }

  /**
   * Adds a problem for each key that {@code taken} says a table writes after the columns it carries, the table and
   * its names told by {@code rule} ("scores/ writes ..."); shared by the scores' check and the clustering's
   * ({@link ClusterColumns#checkCarried}).
   */
  static void refuseKeys(List<String> keys, java.util.function.Predicate<String> taken, String rule,
      List<String> problems) {
    for (String k : keys) {
      if (taken.test(k)) {
        problems.add("features.keys: column " + k + " has the name of a column that " + rule
            + "; leave it out of features.keys or rename it in the input");
      }
    }
  }
}
