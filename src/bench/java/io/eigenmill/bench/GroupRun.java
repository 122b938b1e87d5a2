package io.eigenmill.bench;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.pca.GroupFit;
import io.eigenmill.pca.Groups;
import io.eigenmill.plan.Planner;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SaveMode;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;

/**
 * Groups: one model per group in one pass ({@code reduce.group-by}) against the single-model fit of the same rows and
 * against G separate fits of one group's rows each ({@code input.where}). The table is the main benchmark's fleet
 * table copied once with three group columns of its own ({@link #LEVELS}: {@code g10}, {@code g1000},
 * {@code g10000}, ints drawn per row from a hash of the row's keys and a fixed seed), real Parquet columns so that
 * the fits read them by the columnar path.
 *
 * <p>Cases (covariance, k = 10, standardize, explicit feature list, {@code reduce.min-group-rows = 50}): the
 * single-model fit, the grouped fits of 10 and 1,000 groups (timed in turn, warm-up first), 10 separate filtered fits
 * (total, one repetition), and the grouped fit of 10,000 groups (once, with its peak heap). Two clocks per case: the
 * fit step ({@code Planner.plan} + {@code FitJob.execute}, no output) and the whole job ({@code JobRunner.run}).
 */
final class GroupRun {
  static final int[] LEVELS = {10, 1000, 10000};
  static final long SEED = 20261204L;
  static final long MIN_GROUP_ROWS = 50;
  /** Bumped when the generated columns change, so that an older copy is regenerated. */
  private static final String GENERATOR = "groups-table v1";

  enum Case {
    SINGLE("single", null, "(a) one model, no `reduce.group-by`"),
    G10("grouped-10", "g10", "(b) `reduce.group-by = [g10]`: 10 groups and the pooled model"),
    G1000("grouped-1000", "g1000", "(c) `reduce.group-by = [g1000]`: 1,000 groups and the pooled model"),
    SEPARATE("separate-10", null, "(d) 10 fits, `input.where = \"g10 = i\"` for i = 0..9, total"),
    G10000("grouped-10000", "g10000", "(e) `reduce.group-by = [g10000]`: 10,000 groups and the pooled model");

    final String word;
    final String by;
    final String what;

    Case(String word, String by, String what) {
      this.word = word;
      this.by = by;
      this.what = what;
    }
  }

  enum Measure {
    FIT("fit step", "`Planner.plan` + `FitJob.execute`, wall clock: planning, the row count per group (grouped), "
        + "the pass, the merges and every eigenproblem; no output written"),
    JOB("whole job", "`JobRunner.run`, wall clock: plan, fit, model/ (with the group models), spectrum/, "
        + "components/, summary.json, report.html, atomic commit");

    final String word;
    final String covers;

    Measure(String word, String covers) {
      this.word = word;
      this.covers = covers;
    }
  }

  /**
   * One case's clocks and what its last fit said.
   *
   * @param stages the fit's own timings of the last fit-step repetition
   * @param spark the Spark stages of the last fit-step repetition, per job group ({@link StageLog#describe})
   * @param groups groups with a model / all groups (grouped cases)
   * @param solvedOn where the groups were merged and solved (grouped cases; from the job's summary.json)
   * @param peakHeap peak heap in use during the case (bytes), -1 when not watched
   */
  record CaseResult(Case c, Timing fit, Timing job, String stages, String spark, String groups, String solvedOn,
      long peakHeap) {
    /** NaN for the whole job of a case whose job has not finished. */
    double median(Measure m) {
      Timing t = m == Measure.FIT ? fit : job;
      return t == null ? Double.NaN : t.median();
    }
  }

  record GroupResult(String tablePath, String spec, double generatedSeconds, BenchTable base, int partitions,
      Map<Case, CaseResult> cases, String rowCheck, List<Ratio> ratios) {}

  private GroupRun() {}

  /**
   * Runs the cases; {@code checkpoint} receives the results so far before the 10,000-group whole job (the riskiest
   * body: its output tables are built on the driver) and the final results after it, so that a job that fails or
   * never returns still leaves the other figures written.
   */
  static GroupResult run(SparkSession spark, BenchOptions options, java.util.function.Consumer<GroupResult>
      checkpoint) {
    BenchTable base = BenchTables.prepare(spark, options.data(), options.rows(), options.features());
    Path dir = Path.of(base.path() + "-groups");
    String spec = String.format(Locale.ROOT, "%s: %s plus int columns %s, each pmod(xxhash64(%d + level, host, "
        + "region, workload, ts), level) per row", GENERATOR, base.spec(), columnNames(), SEED);
    double generated = prepareTable(spark, base, dir, spec);
    BenchTable table = new BenchTable(dir.toString(), base.rows(), base.features(), base.keys(), spec, generated);
    int partitions = spark.read().parquet(table.path()).rdd().getNumPartitions();
    Path work = ScalingRun.runWork(options).resolve("groups");
    Map<Case, CaseResult> out = new EnumMap<>(Case.class);
    try (StageLog log = StageLog.start(spark.sparkContext())) {
      FitResult grouped10 = inTurn(spark, options, table, work, log, out);
      String rowCheck = checkRows(spark, table, grouped10);
      if (!options.groupsInTurn()) {
        separate(spark, table, work, log, out, grouped10);
        tenThousand(spark, table, work, log, out, () -> checkpoint.accept(new GroupResult(table.path(), spec,
            generated, base, partitions, new EnumMap<>(out), rowCheck, ratios(out))));
      }
      GroupResult done = new GroupResult(table.path(), spec, generated, base, partitions, out, rowCheck,
          ratios(out));
      checkpoint.accept(done);
      return done;
    }
  }

  private static List<String> columnNames() {
    List<String> names = new ArrayList<>();
    for (int g : LEVELS) {
      names.add("g" + g);
    }
    return names;
  }

  /**
   * Copies the fleet table with the group columns unless a copy of the same specification is there. Each input file
   * is read whole by one task (splits as large as a core's share of the table), so the copy has one file per date
   * like the original; the metric columns stay without dictionary encoding, the keys and group columns keep it.
   */
  private static double prepareTable(SparkSession spark, BenchTable base, Path dir, String spec) {
    if (spec.equals(BenchTables.readSpec(dir))) {
      System.out.printf(Locale.ROOT, "bench: reusing %s%n", dir);
      return 0;
    }
    System.out.printf(Locale.ROOT, "bench: copying %s with group columns %s into %s%n", base.path(), columnNames(),
        dir);
    long t0 = System.nanoTime();
    BenchTables.deleteTree(dir);
    SparkSession copy = io.eigenmill.io.WriterSession.of(spark, Map.of()).newSession();
    copy.conf().set("spark.sql.files.maxPartitionBytes", String.valueOf(1L << 40));
    var df = copy.read().parquet(base.path());
    Column[] keys = new Column[base.keys().size() + 1];
    for (int i = 0; i < base.keys().size(); i++) {
      keys[i + 1] = functions.col(base.keys().get(i));
    }
    for (int g : LEVELS) {
      keys[0] = functions.lit(SEED + g);
      df = df.withColumn("g" + g, functions.pmod(functions.xxhash64(keys), functions.lit((long) g)).cast("int"));
    }
    var writer = df.write().mode(SaveMode.Overwrite).partitionBy(BenchTables.PARTITION_COLUMN)
        .option("parquet.enable.dictionary", "false");
    for (String k : base.keys()) {
      writer = writer.option("parquet.enable.dictionary#" + k, "true");
    }
    for (String g : columnNames()) {
      writer = writer.option("parquet.enable.dictionary#" + g, "true");
    }
    writer.parquet(dir.toString());
    BenchTables.writeSpec(dir, spec);
    double seconds = (System.nanoTime() - t0) / 1e9;
    System.out.printf(Locale.ROOT, "bench: copied in %.0f s%n", seconds);
    return seconds;
  }

  /**
   * (a), (b), (c): fit step and whole job, their repetitions in turn after one warm-up each. Returns (b)'s last fit.
   */
  private static FitResult inTurn(SparkSession spark, BenchOptions options, BenchTable table, Path work, StageLog log,
      Map<Case, CaseResult> out) {
    List<Case> cases = List.of(Case.SINGLE, Case.G10, Case.G1000);
    Map<Case, long[]> windows = new EnumMap<>(Case.class);
    List<Timer.Case<?>> bodies = new ArrayList<>();
    for (Case c : cases) {
      JobSettings s = settings(table, c.by, null, work.resolve(c.word).toString());
      bodies.add(new Timer.Case<>(c.word + " fit", watched(windows, c, () -> fit(spark, s))));
    }
    for (Case c : cases) {
      JobSettings s = settings(table, c.by, null, work.resolve(c.word).toString());
      bodies.add(new Timer.Case<>(c.word + " job", () -> JobRunner.run(spark, s)));
    }
    List<Timer.Timed<?>> timed = Timer.runInTurn(spark.sparkContext(), options.warmups(), options.repetitions(),
        bodies);
    for (int i = 0; i < cases.size(); i++) {
      Case c = cases.get(i);
      FitResult f = (FitResult) timed.get(i).last();
      RunResult r = (RunResult) timed.get(i + cases.size()).last();
      long[] w = windows.get(c);
      out.put(c, new CaseResult(c, timed.get(i).timing(), timed.get(i + cases.size()).timing(), stages(f
          .timings()), StageLog.describe(log.between(w[0], w[1])), groups(f), solvedOn(r), -1));
    }
    return (FitResult) timed.get(cases.indexOf(Case.G10)).last();
  }

  /** (d): the ten filtered fits, one repetition of the ten (the JVM is warm from the cases before). */
  private static void separate(SparkSession spark, BenchTable table, Path work, StageLog log,
      Map<Case, CaseResult> out, FitResult grouped) {
    Map<String, Long> groupRows = new HashMap<>();
    for (GroupFit g : grouped.groups().groups()) {
      groupRows.put(g.key().texts().get(0), g.rowsUsed());
    }
    List<JobSettings> fits = new ArrayList<>();
    for (int i = 0; i < LEVELS[0]; i++) {
      fits.add(settings(table, null, "g10 = " + i, work.resolve(Case.SEPARATE.word).toString()));
    }
    List<String> fitStages = new ArrayList<>();
    long t0 = System.currentTimeMillis();
    Timer.Timed<Integer> fit = Timer.run(spark.sparkContext(), Case.SEPARATE.word + " fit", 0, 1, () -> {
      fitStages.clear();
      for (int i = 0; i < fits.size(); i++) {
        FitResult f = fit(spark, fits.get(i));
        Long expected = groupRows.get(String.valueOf(i));
        if (expected == null || f.model().rows() != expected) {
          throw new IllegalStateException("the fit of g10 = " + i + " used " + f.model().rows() + " rows, the "
              + "grouped fit's group " + i + " " + expected);
        }
        fitStages.add(stages(f.timings()));
      }
      return fits.size();
    });
    long t1 = System.currentTimeMillis();
    Timer.Timed<Integer> job = Timer.run(spark.sparkContext(), Case.SEPARATE.word + " job", 0, 1, () -> {
      for (JobSettings s : fits) {
        JobRunner.run(spark, s);
      }
      return fits.size();
    });
    out.put(Case.SEPARATE, new CaseResult(Case.SEPARATE, fit.timing(), job.timing(), "first of ten: "
        + fitStages.get(0), StageLog.describe(log.between(t0, t1)), "", "", -1));
  }

  /** (e): 10,000 groups, once each clock (no warm-up: the code is warm from (b) and (c)), peak heap watched. */
  private static void tenThousand(SparkSession spark, BenchTable table, Path work, StageLog log,
      Map<Case, CaseResult> out, Runnable beforeJob) {
    Case c = Case.G10000;
    JobSettings s = settings(table, c.by, null, work.resolve(c.word).toString());
    try (HeapWatch heap = HeapWatch.start()) {
      Map<Case, long[]> windows = new EnumMap<>(Case.class);
      Timer.Timed<FitResult> fit = Timer.run(spark.sparkContext(), c.word + " fit", 0, 1,
          watched(windows, c, () -> fit(spark, s)));
      long[] w = windows.get(c);
      String fitStages = stages(fit.last().timings());
      String sparkStages = StageLog.describe(log.between(w[0], w[1]));
      String solved = fit.last().groups().onDriver() ? "driver" : "executors";
      out.put(c, new CaseResult(c, fit.timing(), null, fitStages, sparkStages, groups(fit.last()), solved
          + " (fit step; whole job not finished)", heap.peakBytes()));
      beforeJob.run();
      Timer.Timed<RunResult> job = Timer.run(spark.sparkContext(), c.word + " job", 0, 1, () -> JobRunner.run(spark,
          s));
      out.put(c, new CaseResult(c, fit.timing(), job.timing(), fitStages, sparkStages, groups(fit.last()),
          solvedOn(job.last()), heap.peakBytes()));
    }
  }

  /** The body, with the epoch-millisecond window of its latest call kept under {@code c}. */
  static <K, T> Callable<T> watched(Map<K, long[]> windows, K c, Callable<T> body) {
    return () -> {
      long t0 = System.currentTimeMillis();
      T v = body.call();
      windows.put(c, new long[] {t0, System.currentTimeMillis()});
      return v;
    };
  }

  private static FitResult fit(SparkSession spark, JobSettings s) {
    return new FitJob(spark, Planner.plan(spark, s)).execute();
  }

  /**
   * (b)'s groups against a count by the engine: the same 10 keys, the same rows each, every group with a model.
   */
  private static String checkRows(SparkSession spark, BenchTable table, FitResult grouped) {
    Map<String, Long> expected = new HashMap<>();
    for (Row r : spark.read().parquet(table.path()).groupBy("g10").count().collectAsList()) {
      expected.put(String.valueOf(r.getInt(0)), r.getLong(1));
    }
    Groups groups = grouped.groups();
    if (groups.groups().size() != expected.size()) {
      throw new IllegalStateException("grouped-10 has " + groups.groups().size() + " groups, the table "
          + expected.size());
    }
    long min = Long.MAX_VALUE;
    long max = 0;
    for (GroupFit g : groups.groups()) {
      Long n = expected.get(g.key().texts().get(0));
      if (n == null || n != g.rowsRead() || !g.hasModel()) {
        throw new IllegalStateException("grouped-10, group " + g.key().texts() + ": " + g.rowsRead() + " rows read"
            + (g.hasModel() ? "" : ", no model") + "; the engine counts " + n);
      }
      min = Math.min(min, n);
      max = Math.max(max, n);
    }
    return String.format(Locale.ROOT, "grouped-10: 10 groups, each with a model and the rows a Spark "
        + "`groupBy(g10).count()` gives it (%,d to %,d rows read); each separate fit of g10 = i used as many rows "
        + "as the grouped fit's group i", min, max);
  }

  private static List<Ratio> ratios(Map<Case, CaseResult> cases) {
    List<Ratio> out = new ArrayList<>();
    for (Measure m : Measure.values()) {
      String tag = " (" + m.word + ")";
      out.add(ratio(cases, Case.G10, Case.SINGLE, m, tag, Ratio.Target.atMost(1.3)));
      out.add(ratio(cases, Case.G1000, Case.SINGLE, m, tag, Ratio.Target.atMost(2)));
      out.add(ratio(cases, Case.SEPARATE, Case.G10, m, tag, Ratio.Target.atLeast(5)));
      out.add(ratio(cases, Case.G10000, Case.SINGLE, m, tag, null));
    }
    out.removeIf(java.util.Objects::isNull);
    return out;
  }

  private static Ratio ratio(Map<Case, CaseResult> cases, Case top, Case bottom, Measure m, String tag,
      Ratio.Target target) {
    if (!cases.containsKey(top) || !cases.containsKey(bottom)) {
      return null;
    }
    return new Ratio(top.word + " / " + bottom.word + tag, cases.get(top).median(m) / cases.get(bottom).median(m),
        target);
  }

  private static String groups(FitResult f) {
    Groups g = f.groups();
    return g == null ? "" : String.format(Locale.ROOT, "%,d of %,d with a model", g.groups().size() - g.skipped(),
        g.groups().size());
  }

  /** group_by.solved_on of the job's summary.json. */
  private static String solvedOn(RunResult r) {
    if (r.fit() == null || r.fit().groups() == null) {
      return "";
    }
    try {
      JsonNode summary = new ObjectMapper().readTree(Path.of(r.outputPath()).resolve("summary.json").toFile());
      return summary.path("group_by").path("solved_on").asText("?");
    } catch (IOException e) {
      return r.fit().groups().onDriver() ? "driver" : "executors";
    }
  }

  private static JobSettings settings(BenchTable table, String by, String where, String output) {
    List<String> lines = new ArrayList<>(List.of(
        "name = " + BenchJobs.quote("bench-groups"),
        "input.path = " + BenchJobs.quote(table.path()),
        "features.columns = " + BenchJobs.list(table.features()),
        "features.keys = " + BenchJobs.list(table.keys()),
        "prepare.scaling = standardize",
        "reduce.method = covariance",
        "reduce.components = " + BenchJobs.COMPONENTS,
        "output.path = " + BenchJobs.quote(output),
        "output.mode = overwrite"));
    if (by != null) {
      lines.add("reduce.group-by = [" + by + "]");
      lines.add("reduce.min-group-rows = " + MIN_GROUP_ROWS);
    }
    if (where != null) {
      lines.add("input.where = " + BenchJobs.quote(where));
    }
    return new SettingsReader().readString(String.join("\n", lines), List.of(), "bench-groups");
  }

  /** The fit's own timings, "stage seconds, ...". */
  static String stages(Map<String, Double> seconds) {
    List<String> parts = new ArrayList<>();
    seconds.forEach((stage, v) -> parts.add(stage + " " + String.format(Locale.ROOT, "%.3f", v)));
    return String.join(", ", parts);
  }

  static String render(GroupResult r, List<String> header) {
    StringBuilder s = new StringBuilder("## Groups: one model per group in one pass\n\n");
    header.forEach(h -> s.append(h).append('\n'));
    s.append(String.format(Locale.ROOT, "- table: `%s` (%s; %s), %,d rows x %d features, %d input partitions%n",
        shortPath(r.tablePath()), r.spec(), r.generatedSeconds() > 0 ? String.format(Locale.ROOT,
            "copied in %.0f s", r.generatedSeconds()) : "reused", r.base().rows(), r.base().d(), r.partitions()));
    s.append("- every case: covariance, k = 10, standardize, explicit feature list (the group columns are not "
        + "features); grouped cases `reduce.min-group-rows = " + MIN_GROUP_ROWS + "`\n");
    for (Case c : Case.values()) {
      s.append("- ").append(c.word).append(": ").append(c.what).append('\n');
    }
    for (Measure m : Measure.values()) {
      s.append("- ").append(m.word).append(": ").append(m.covers).append('\n');
    }
    s.append("- single, grouped-10 and grouped-1000 time their repetitions in turn (the six bodies, fit step and "
        + "whole job of each, one after the other per repetition) after one warm-up each; separate-10 and "
        + "grouped-10000 run once each, without a warm-up of their own; figures are medians\n");
    s.append("- check: ").append(r.rowCheck()).append("\n\n");
    List<List<String>> rows = new ArrayList<>();
    for (CaseResult c : r.cases().values()) {
      rows.add(List.of(c.c().word, String.valueOf(c.fit().repetitions()), Report.seconds(c.fit().median()),
          c.job() == null ? "not finished" : Report.seconds(c.job().median()), c.groups(), c.solvedOn(), c.peakHeap() < 0 ? "" : Report.bytes(c
          .peakHeap())));
    }
    s.append(Report.table(List.of("case", "reps", "fit step s", "whole job s", "groups", "solved on", "peak heap"),
        rows));
    s.append("\n");
    List<List<String>> ratioRows = new ArrayList<>();
    for (Ratio q : r.ratios()) {
      ratioRows.add(List.of(q.name(), Report.number(q.value()), q.target() == null ? "" : q.target().describe(),
          Double.isNaN(q.value()) ? "not measured" : q.verdict()));
    }
    s.append(Report.table(List.of("ratio", "value", "target", "verdict"), ratioRows));
    s.append("\nWhere the time went (last fit-step repetition: the fit's own timings; the Spark stages by job group, "
        + "wall and summed task time):\n\n");
    for (CaseResult c : r.cases().values()) {
      s.append("- ").append(c.c().word).append(": ").append(c.stages()).append("; stages: ").append(c.spark())
          .append('\n');
    }
    return s.toString();
  }

  /** The path from {@code local-demo/} on, when it lies under it. */
  static String shortPath(String path) {
    int i = path.indexOf("local-demo/");
    return i < 0 ? path : path.substring(i);
  }
}
