package io.eigenmill.report;

import io.eigenmill.io.LongTable;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Map;

/**
 * The pivot of a long table ({@code input.layout = long}): what it made of the long rows, what it skipped, and how
 * often each metric has a value in the rows it made, against {@code input.long.min-presence}. Read from the plan's
 * {@link LongTable.View} once the pivot has run; null for a wide input.
 *
 * @param intro one sentence on what the pivot did
 * @param facts counts and time of the pivot, skipped rows by reason (only reasons that skipped any)
 * @param bars one per metric drawn, least present first, at most {@link #BARS}
 * @param metricsTotal all metrics of the pivot
 * @param dropped metrics left out of the fit
 * @param minPresence {@code input.long.min-presence}
 * @param dropsSparse true when the job drops sparse metrics (a fit; an apply job keeps the model's metrics)
 * @param renamed metric name and column, for the names that are not column names, at most {@link #RENAMED}
 * @param renamedTotal all renamed metrics
 */
public record LongInputModel(
    String intro,
    List<Fact> facts,
    List<Bar> bars,
    int metricsTotal,
    int dropped,
    double minPresence,
    boolean dropsSparse,
    List<List<String>> renamed,
    int renamedTotal) {

  /** Metrics drawn in the presence chart (the least present). */
  static final int BARS = 60;
  /** Renamed metrics listed. */
  static final int RENAMED = 60;

  /**
   * One metric.
   *
   * @param present the pivoted rows where it has a value; {@code presence} their share
   * @param dropped true when the fit left it out
   */
  public record Bar(String metric, String column, long present, double presence, boolean dropped) {}

  static LongInputModel of(RunResult run) {
    JobPlan plan = run.plan();
    LongTable.View view = plan.longInput();
    if (view == null || view.pivoted() == null) {
      return null;
    }
    LongTable.PivotCounts p = view.pivoted();
    JobSettings.LongLayout l = view.layout();
    JobSettings.Input in = plan.settings().input();
    List<Bar> all = new ArrayList<>();
    int dropped = 0;
    for (int j = 0; j < view.metrics().size(); j++) {
      boolean out = !plan.features().contains(view.columns().get(j));
      dropped += out ? 1 : 0;
      all.add(new Bar(view.metrics().get(j), view.columns().get(j), p.present()[j], p.presence(j), out));
    }
    List<Bar> bars = new ArrayList<>(all);
    bars.sort(Comparator.comparingDouble(Bar::presence));
    bars = List.copyOf(bars.subList(0, Math.min(BARS, bars.size())));
    List<Fact> facts = new ArrayList<>();
    facts.add(new Fact("Long table", view.path() + " [" + in.format().word() + "]"));
    facts.add(new Fact("Metric names", (view.discovered() ? "found in column " + l.metric()
        : "as listed in features.columns") + ": " + Fmt.count(view.metrics().size())));
    facts.add(new Fact("Long rows read", Fmt.count(p.longRows()) + (in.filtered() ? " (those input.where keeps)"
        : "")));
    facts.add(new Fact("Rows made", Fmt.count(p.rows())));
    facts.add(new Fact("Pivot time", Fmt.seconds(p.seconds())));
    long skipped = 0;
    for (Object[] reason : new Object[][] {{"no metric name", p.nullMetric()}, {"a metric not selected",
        p.otherMetric()}, {"a null value", p.nullValue()}, {"a NaN or infinite value", p.nonFinite()},
        {"a null time", p.nullTime()}}) {
      long n = (Long) reason[1];
      if (n > 0) {
        facts.add(new Fact("Skipped: " + reason[0], Fmt.count(n)));
        skipped += n;
      }
    }
    if (skipped == 0) {
      facts.add(new Fact("Skipped rows", "none"));
    }
    boolean dropsSparse = !plan.kind().startsWith("apply");
    facts.add(new Fact("Sparse metrics", dropsSparse
        ? "input.long.min-presence = " + Fmt.num(l.minPresence()) + ": " + (dropped == 0 ? "none dropped"
            : Fmt.count(dropped) + " dropped, " + Fmt.count(all.size() - dropped) + " left for the fit")
        : "none dropped: an apply job keeps the model's metrics (their gaps follow prepare.missing)"));
    List<List<String>> renamed = new ArrayList<>();
    Map<String, String> names = view.renamed();
    for (Map.Entry<String, String> e : names.entrySet()) {
      if (renamed.size() < RENAMED) {
        renamed.add(List.of(e.getKey(), e.getValue()));
      }
    }
    return new LongInputModel(intro(view, all.size()), facts, bars, all.size(), dropped, l.minPresence(),
        dropsSparse, renamed, names.size());
  }

  /**
   * "1,840,820 long rows of 62 metrics became 30,000 rows: one per host, date and 5-minute bucket of ts, each cell
   * the mean of the bucket's values."
   */
  static String intro(LongTable.View view, int metrics) {
    JobSettings.LongLayout l = view.layout();
    LongTable.PivotCounts p = view.pivoted();
    List<String> per = new ArrayList<>(l.entity());
    per.addAll(view.carried());
    String group = "metric's values for that row";
    if (l.timed()) {
      if (l.bucketMicros() == 0) {
        per.add("distinct " + l.time());
      } else {
        per.add(bucket(l.bucketMicros()) + " bucket of " + l.time());
        group = "bucket's values";
      }
    }
    String cell = switch (l.aggregate()) {
      case MEAN -> "the mean of the " + group;
      case SUM -> "the sum of the " + group;
      case MAX -> "the largest of the " + group;
      case MIN -> "the smallest of the " + group;
      case LAST -> "the latest of the " + group;
    };
    return Fmt.count(p.longRows()) + " long rows of " + Fmt.count(metrics) + (metrics == 1 ? " metric" : " metrics")
        + " became " + Fmt.count(p.rows()) + (p.rows() == 1 ? " row" : " rows") + ": one per " + joined(per)
        + ", each cell " + cell + " (one column per metric; a cell is empty when the metric has no value there).";
  }

  /** The width of a bucket as a word before "bucket": "5-minute", "1-hour". */
  static String bucket(long micros) {
    String[] text = JobPlan.bucketText(micros).split(" ");
    String unit = text[1].endsWith("s") ? text[1].substring(0, text[1].length() - 1) : text[1];
    return text[0] + "-" + unit;
  }

  /** "a", "a and b", "a, b and c". */
  static String joined(List<String> parts) {
    if (parts.size() <= 1) {
      return String.join("", parts);
    }
    return String.join(", ", parts.subList(0, parts.size() - 1)) + " and " + parts.get(parts.size() - 1);
  }
}
