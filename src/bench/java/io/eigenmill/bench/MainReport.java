package io.eigenmill.bench;

import io.eigenmill.bench.MainResult.CaseResult;
import io.eigenmill.bench.MainResult.KMeansQuality;
import io.eigenmill.bench.MainResult.MethodAccuracy;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/** The main section of the results file, and its console summary. */
final class MainReport {
  private MainReport() {}

  static String render(MainResult r, List<String> header) {
    StringBuilder s = new StringBuilder();
    s.append(String.format(Locale.ROOT, "## Main cases: %,d rows x %d features%n%n", r.table().rows(),
        r.table().d()));
    header.forEach(h -> s.append(h).append('\n'));
    s.append("- table: `").append(r.table().path()).append("` (").append(r.table().spec()).append(r.table()
        .generatedSeconds() > 0 ? String.format(Locale.ROOT, "; generated in %.0f s", r.table().generatedSeconds())
        : "; reused").append(")\n");
    s.append("- in turn: ").append(String.join(" and ", MainCases.PAIRS.entrySet().stream()
        .sorted(java.util.Map.Entry.comparingByKey()).map(e -> e.getKey().word() + " with " + e.getValue().word())
        .toList())).append(" (the two sides of a target ratio) run their timed repetitions alternately, one of each"
        + " at a time, when both are asked for\n\n");
    s.append(Report.table(List.of("case", "min s", "median s", "reps", "notes", "what the clock covers"),
        caseRows(r))).append('\n');
    s.append("### Ratios and targets\n\nRatios of median times (the last one of within-cluster sums of squares).\n\n");
    s.append(Report.table(List.of("ratio", "value", "target", "verdict"), ratioRows(r.ratios()))).append('\n');
    List<String> pairs = inTurnLines(r.ratios());
    if (!pairs.isEmpty()) {
      s.append("Sides timed in turn, repetition by repetition (each repetition over the other side's repetition "
          + "timed next to it: a slow spell of the machine falls on both):\n\n");
      for (String line : pairs) {
        s.append("- ").append(line).append('\n');
      }
      s.append('\n');
    }
    if (!r.accuracy().isEmpty()) {
      s.append("### Accuracy\n\nVariance shares of the first components; the largest principal angle "
          + "between each method's loadings and the covariance method's, over all k = 10 components and over the "
          + "first 3; and eigenvalue 10 over eigenvalue 11 (near 1, the 10th direction is nearly degenerate, so "
          + "the k = 10 subspace is ill-determined in that direction whatever the method).\n\n");
      s.append(Report.table(List.of("method", "variance share 1", "variance share 2", "variance share 3",
          "largest angle, k = 10 (rad)", "largest angle, first 3 (rad)", "eigenvalue 10 / 11"),
          accuracyRows(r.accuracy()))).append('\n');
    }
    if (r.kmeans() != null) {
      s.append("### k-means quality\n\n").append(Report.table(List.of("implementation", "wcss", "work"),
          kmeansRows(r.kmeans())));
    }
    return s.toString();
  }

  private static List<List<String>> caseRows(MainResult r) {
    List<List<String>> rows = new ArrayList<>();
    for (CaseResult c : r.cases()) {
      rows.add(List.of(c.which().word(), Report.seconds(c.timing().min()), Report.seconds(c.timing().median()),
          Integer.toString(c.timing().repetitions()), c.notes(), c.which().timed()));
    }
    return rows;
  }

  /** "fit-covariance / read-floor: 1.18, 1.10, 1.20 (target <= 1.20: met by 3 of 3)" for each ratio timed in turn. */
  static List<String> inTurnLines(List<Ratio> ratios) {
    List<String> lines = new ArrayList<>();
    for (Ratio q : ratios) {
      if (q.inTurn().length == 0) {
        continue;
      }
      List<String> values = new ArrayList<>();
      int met = 0;
      for (double v : q.inTurn()) {
        values.add(Report.number(v));
        met += q.target() == null || q.target().met(v) ? 1 : 0;
      }
      lines.add(q.name() + ": " + String.join(", ", values) + (q.target() == null ? ""
          : " (target " + q.target().describe() + ": met by " + met + " of " + values.size() + ")"));
    }
    return lines;
  }

  static List<List<String>> ratioRows(List<Ratio> ratios) {
    List<List<String>> rows = new ArrayList<>();
    for (Ratio q : ratios) {
      rows.add(List.of(q.name(), q.target() != null && q.target().quality()
          ? String.format(Locale.ROOT, "%.6f", q.value()) : Report.number(q.value()),
          q.target() == null ? "" : q.target().describe(), q.verdict()));
    }
    return rows;
  }

  private static List<List<String>> accuracyRows(List<MethodAccuracy> accuracy) {
    List<List<String>> rows = new ArrayList<>();
    for (MethodAccuracy a : accuracy) {
      List<String> row = new ArrayList<>();
      row.add(a.method() + (a.scaled() ? "" : " (unscaled features)"));
      for (int i = 0; i < MainCases.LEADING; i++) {
        row.add(i < a.leadingShares().length ? String.format(Locale.ROOT, "%.8f", a.leadingShares()[i]) : "");
      }
      row.add(angle(a.largestAngle()));
      row.add(angle(a.largestLeadingAngle()));
      row.add(Double.isNaN(a.gapAfterK()) ? "" : String.format(Locale.ROOT, "%.4f", a.gapAfterK()));
      rows.add(row);
    }
    return rows;
  }

  private static String dash(String text) {
    return text.isEmpty() ? "-" : text;
  }

  private static String angle(double radians) {
    return Double.isNaN(radians) ? "" : String.format(Locale.ROOT, "%.2e", radians);
  }

  private static List<List<String>> kmeansRows(KMeansQuality q) {
    List<List<String>> rows = new ArrayList<>();
    if (!Double.isNaN(q.ours())) {
      rows.add(List.of("ours (kmeans)", String.format(Locale.ROOT, "%.8g", q.ours()),
          q.ourPasses() + " passes (summary, Lloyd; k-means|| on the driver's sample of cluster.init-sample"
              + " rows)"));
    }
    if (!Double.isNaN(q.builtin())) {
      rows.add(List.of("engine (builtin-kmeans)", String.format(Locale.ROOT, "%.8g", q.builtin()),
          q.builtinIterations() + " Lloyd iterations (plus its k-means|| initialisation)"));
    }
    return rows;
  }

  /** The ratios as console lines. */
  static void print(MainResult r) {
    System.out.println();
    for (CaseResult c : r.cases()) {
      System.out.printf(Locale.ROOT, "bench: %-16s min %8.3f s  median %8.3f s  %s%n", c.which().word(),
          c.timing().min(), c.timing().median(), c.notes());
    }
    for (Ratio q : r.ratios()) {
      System.out.printf(Locale.ROOT, "bench: %-48s %10s  %-8s %s%n", q.name(), Report.number(q.value()),
          q.target() == null ? "" : q.target().describe(), q.verdict());
    }
    for (String line : inTurnLines(r.ratios())) {
      System.out.println("bench: in turn, " + line);
    }
    for (MethodAccuracy a : r.accuracy()) {
      System.out.printf(Locale.ROOT, "bench: accuracy %-12s variance shares %s  largest angle k = 10: %s, "
          + "first 3: %s; eigenvalue 10 / 11: %.4f%n", a.method(), java.util.Arrays.toString(a.leadingShares()),
          dash(angle(a.largestAngle())), dash(angle(a.largestLeadingAngle())), a.gapAfterK());
    }
    if (r.kmeans() != null) {
      System.out.printf(Locale.ROOT, "bench: wcss ours %.8g, engine %.8g%n", r.kmeans().ours(),
          r.kmeans().builtin());
    }
  }
}
