package io.eigenmill.bench;

import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.CopyOnWriteArrayList;
import org.apache.spark.SparkContext;
import org.apache.spark.scheduler.SparkListener;
import org.apache.spark.scheduler.SparkListenerStageCompleted;
import org.apache.spark.scheduler.SparkListenerStageSubmitted;
import org.apache.spark.scheduler.StageInfo;

/**
 * The Spark stages that ran while it listened: each one's job group (the product labels its passes with one, e.g.
 * {@code eigenmill-fit/groups}; a stage outside any group, such as the grouped fit's row count, has none), its
 * call site, wall time and the executors' run time summed over its tasks. Used to say where a case's time went.
 */
final class StageLog extends SparkListener implements AutoCloseable {
  /** One completed stage; times in epoch milliseconds. */
  record Stage(int id, String group, String name, int tasks, long submitted, long completed, long taskMillis) {
    double wallSeconds() {
      return (completed - submitted) / 1e3;
    }
  }

  private final SparkContext sc;
  private final Map<Integer, String> groups = new java.util.concurrent.ConcurrentHashMap<>();
  private final List<Stage> stages = new CopyOnWriteArrayList<>();

  private StageLog(SparkContext sc) {
    this.sc = sc;
  }

  static StageLog start(SparkContext sc) {
    StageLog log = new StageLog(sc);
    sc.addSparkListener(log);
    return log;
  }

  @Override
  public void onStageSubmitted(SparkListenerStageSubmitted e) {
    String g = e.properties() == null ? null : e.properties().getProperty("spark.jobGroup.id");
    groups.put(e.stageInfo().stageId(), g == null ? "" : g);
  }

  @Override
  public void onStageCompleted(SparkListenerStageCompleted e) {
    StageInfo s = e.stageInfo();
    long submitted = s.submissionTime().isDefined() ? (Long) s.submissionTime().get() : 0L;
    long completed = s.completionTime().isDefined() ? (Long) s.completionTime().get() : submitted;
    long run = s.taskMetrics() == null ? 0 : s.taskMetrics().executorRunTime();
    stages.add(new Stage(s.stageId(), groups.getOrDefault(s.stageId(), ""), s.name(), s.numTasks(), submitted,
        completed, run));
  }

  /** The stages submitted from {@code fromMillis} to {@code toMillis} (epoch ms), once the events are delivered. */
  List<Stage> between(long fromMillis, long toMillis) {
    drain();
    List<Stage> out = new ArrayList<>();
    for (Stage s : stages) {
      if (s.submitted() >= fromMillis && s.submitted() <= toMillis) {
        out.add(s);
      }
    }
    out.sort(java.util.Comparator.comparingLong(Stage::submitted));
    return out;
  }

  /** "count (2 stages) 0.91 s wall / 1.7 s tasks; fit/groups ..." summed per job group, in order of appearance. */
  static String describe(List<Stage> stages) {
    Map<String, double[]> by = new LinkedHashMap<>();
    for (Stage s : stages) {
      String label = s.group().isEmpty() ? "ungrouped: " + s.name().replaceAll(" at .*", "")
          : s.group().replaceFirst("^eigenmill-", "");
      double[] v = by.computeIfAbsent(label, k -> new double[4]);
      v[0] += 1;
      v[1] += s.wallSeconds();
      v[2] += s.taskMillis() / 1e3;
      v[3] += s.tasks();
    }
    List<String> parts = new ArrayList<>();
    by.forEach((label, v) -> parts.add(String.format(Locale.ROOT, "%s: %d stage%s, %d tasks, %.2f s wall, %.2f s "
        + "task time", label, (int) v[0], v[0] == 1 ? "" : "s", (int) v[3], v[1], v[2])));
    return String.join("; ", parts);
  }

  private void drain() {
    try {
      sc.listenerBus().waitUntilEmpty(10_000L);
    } catch (java.util.concurrent.TimeoutException | RuntimeException e) {
      // the bus is internal to Spark: when it cannot be waited on, give the events a moment
      try {
        Thread.sleep(500);
      } catch (InterruptedException ie) {
        Thread.currentThread().interrupt();
      }
    }
  }

  @Override
  public void close() {
    sc.removeSparkListener(this);
  }
}
