package io.eigenmill.bench;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.eigenmill.Version;
import io.eigenmill.engine.SessionSettings;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.plan.ScanSplits;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.lang.management.ManagementFactory;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.EnumMap;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.SaveMode;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;

/**
 * Whole processes ({@code --process}): what a user waits for, from starting a JVM to its exit, on the main table.
 * Each case is a child JVM started the way the local runner starts the command line ({@link Children}): the same
 * java binary, class path, JVM flags and environment as this JVM, with the runner's heap. Every child opens its
 * Spark session as the command line does (the job file over conf/local.conf), so a JVM that only opens and stops
 * that session ({@link Case#START_ONLY}) is the start-up every case pays; the other cases are compared net of it,
 * repetition by repetition. The cases are timed in turn (repetition 1 of every case, then repetition 2, ...), with
 * no warm-up: every process starts cold, which is the point.
 *
 * <p>The fit is the command line itself ({@code io.eigenmill.cli.Main run}) on a covariance job with the main
 * cases' fit settings; its {@code summary.json} timings split its net time into the passes over the data with the
 * solve ({@link #PASS_STAGES}) and the rest, its fixed cost. The engine's PCA runs on the table and on a copy
 * without missing values and with the features only, to separate what the table costs it from what the process
 * does.
 *
 * <p>Targets: fit / read-only (both net of start-up) <= 1.5; the fit's fixed cost (net time less its pass stages,
 * median over repetitions) < 1 s.
 */
final class ProcessRun {
  /**
   * The keys of summary.json's {@code timings_seconds} that are the fit's passes over the data and the solve
   * (FitJob's stages); every other key is fixed cost, or start-up (settings, spark-start), which start-only pays too.
   */
  static final List<String> PASS_STAGES = List.of("column-means", "tsqr", "moments", "covariance", "randomized",
      "model");
  /** The fit's fixed cost must stay below this many seconds. */
  static final double FIXED_COST_TARGET = 1;
  /** The heap the local runner gives the command line when EIGENMILL_DRIVER_MEMORY is not set. */
  static final String DEFAULT_HEAP = "4g";
  static final String COMMAND_LINE = "io.eigenmill.cli.Main";
  /** Lines of a failed child's output quoted in the error. */
  private static final int LAST_LINES = 20;
  private static final String LEAF_SLOTS = "spark.sql.leafNodeDefaultParallelism";

  /** The child processes, in the order each round runs them. */
  enum Case {
    START_ONLY("start-only", "JVM start, the job file read over conf/local.conf, the Spark session opened as the "
        + "command line opens it (`Sessions.open`) and stopped, JVM exit"),
    READ_ONLY("read-only", "as start-only, plus the read floor between: Spark's columnar batches of the features, "
        + "every column summed (`Floors.readFloor`, in the splits the fit's plan chose), the sums printed"),
    FIT("fit", "the command line: `io.eigenmill.cli.Main run` of a covariance job (k = 10, standardize, the main "
        + "cases' fit settings, `output.mode = overwrite`) with conf/local.conf: the whole job, its output "
        + "written and committed"),
    BUILTIN_PCA("builtin-pca", "as start-only, plus the engine's `VectorAssembler` (handleInvalid skip) + "
        + "`ml.feature.PCA(k = 10).fit` on the table, as the main builtin-pca case"),
    BUILTIN_PCA_COMPLETE("builtin-pca-complete", "as builtin-pca, on the complete copy of the table"),
    BUILTIN_PCA_NO_CODEGEN("builtin-pca-no-codegen", "as builtin-pca, with Spark's whole-stage code generation "
        + "turned off for the session (`spark.sql.codegen.wholeStage = false`): the engine's best setting found here");

    final String word;
    final String what;

    Case(String word, String what) {
      this.word = word;
      this.what = what;
    }
  }

  /**
   * The copy of the table without missing values and with the features only.
   *
   * @param rows its rows (the table's rows without a missing feature)
   * @param writtenSeconds seconds spent writing it in this run; 0 when reused
   */
  record Complete(String path, long rows, double writtenSeconds) {}

  /**
   * How the children start, as the local runner starts the command line: this JVM's java binary, its JVM flags but
   * its heap ({@code -Xmx} of EIGENMILL_DRIVER_MEMORY, default 4g, as local-demo/eigenmill gives), its class path
   * and its environment (inherited: the OpenBLAS settings of local-demo/blas-env).
   *
   * @param flags the JVM flags, the heap first
   * @param profile the local environment profile (conf/local.conf)
   * @param master the profile's Spark master
   * @param slots the tasks the children's session runs at once
   */
  record Children(String java, List<String> flags, String classPath, Path profile, String master, int slots) {

    static Children of(Path profile, String master) {
      String java = ProcessHandle.current().info().command()
          .orElse(Path.of(System.getProperty("java.home"), "bin", "java").toString());
      String heap = System.getenv("EIGENMILL_DRIVER_MEMORY");
      return new Children(java, ProcessRun.flags(ManagementFactory.getRuntimeMXBean().getInputArguments(),
          heap == null || heap.isBlank() ? DEFAULT_HEAP : heap.strip()), System.getProperty("java.class.path"),
          profile, master, ProcessRun.slots(master));
    }

    /** The command of a child: java, flags, class path, main class, arguments. */
    List<String> command(String main, List<String> args) {
      List<String> out = new ArrayList<>();
      out.add(java);
      out.addAll(flags);
      out.add("-cp");
      out.add(classPath);
      out.add(main);
      out.addAll(args);
      return out;
    }
  }

  /**
   * What the run measured.
   *
   * @param table the main cases' table
   * @param wall each case's wall seconds, repetition by repetition
   * @param fitStages the fit's summary.json {@code timings_seconds} of each repetition, in order
   * @param rowsRead the rows the read-only process read
   * @param splits the fit's plan of the scan, whose split size the read-only process reads in
   */
  record ProcessResult(BenchTable table, Complete complete, Children children, Map<Case, Timing> wall,
      List<Map<String, Double>> fitStages, long rowsRead, ScanSplits splits) {

    /** {@code c}'s wall seconds less start-only's of the same round. */
    double[] net(Case c) {
      double[] a = wall.get(c).seconds();
      double[] start = wall.get(Case.START_ONLY).seconds();
      double[] out = new double[a.length];
      for (int i = 0; i < out.length; i++) {
        out[i] = a[i] - start[i];
      }
      return out;
    }

    double netMedian(Case c) {
      return new Timing(net(c)).median();
    }

    /** The seconds of each repetition's pass stages (summary.json). */
    double[] passSeconds() {
      double[] out = new double[fitStages.size()];
      for (int i = 0; i < out.length; i++) {
        for (String stage : PASS_STAGES) {
          out[i] += fitStages.get(i).getOrDefault(stage, 0.0);
        }
      }
      return out;
    }

    /** The fit's fixed cost of each repetition: its net wall seconds less its pass stages. */
    double[] fixedCosts() {
      double[] net = net(Case.FIT);
      double[] passes = passSeconds();
      double[] out = new double[net.length];
      for (int i = 0; i < out.length; i++) {
        out[i] = net[i] - passes[i];
      }
      return out;
    }

    double fixedCost() {
      return new Timing(fixedCosts()).median();
    }

    boolean fixedCostMet() {
      return fixedCost() < FIXED_COST_TARGET;
    }

    /** The median of every key of the fit's timings over the repetitions that have it, in the order they ran. */
    Map<String, Double> medianStages() {
      Set<String> keys = new LinkedHashSet<>();
      fitStages.forEach(m -> keys.addAll(m.keySet()));
      Map<String, Double> out = new LinkedHashMap<>();
      for (String key : keys) {
        double[] values = fitStages.stream().filter(m -> m.containsKey(key)).mapToDouble(m -> m.get(key))
            .toArray();
        out.put(key, new Timing(values).median());
      }
      return out;
    }

    /** The ratios, net of start-up, each with its repetition pairs. */
    List<Ratio> ratios() {
      return List.of(ratio(Case.FIT, Case.READ_ONLY, Ratio.Target.atMost(1.5)),
          ratio(Case.BUILTIN_PCA, Case.FIT, null), ratio(Case.BUILTIN_PCA_NO_CODEGEN, Case.FIT, null),
          ratio(Case.BUILTIN_PCA, Case.BUILTIN_PCA_COMPLETE, null),
          ratio(Case.BUILTIN_PCA, Case.BUILTIN_PCA_NO_CODEGEN, null));
    }

    private Ratio ratio(Case top, Case bottom, Ratio.Target target) {
      double[] a = net(top);
      double[] b = net(bottom);
      double[] pairs = new double[a.length];
      for (int i = 0; i < pairs.length; i++) {
        pairs[i] = a[i] / b[i];
      }
      return new Ratio(top.word + " process / " + bottom.word + " process (net of start-up)",
          netMedian(top) / netMedian(bottom), target, pairs);
    }
  }

  private ProcessRun() {}

  /** Prepares the table, its complete copy and the job files, then times the child processes in turn. */
  static ProcessResult run(SparkSession spark, BenchOptions options) {
    BenchTable table = BenchTables.prepare(spark, options.data(), options.rows(), options.features());
    Complete complete = complete(spark, table);
    Path work = ScalingRun.workFor(options, table).resolve("process");
    Path logs = work.resolve("logs");
    Path profile = localProfile();
    int reps = options.repetitions();
    List<String> columns = Benchmark.allNumeric(spark, table) ? List.of() : table.features();
    // one job file and output folder per repetition: each run's summary.json is read after all of them, so that
    // nothing but the child process is on the clock
    List<Path> jobs = new ArrayList<>();
    for (int r = 1; r <= reps; r++) {
      jobs.add(writeJob(work.resolve("fit-" + r + ".conf"), table, columns, work.resolve("fit-output-" + r)));
    }
    JobSettings settings = new SettingsReader().read(jobs.get(0).toFile(), List.of(), profile.toFile());
    Children children = Children.of(profile, settings.spark().master());
    JobPlan plan = planAsChildren(spark, settings, children.slots());
    if (plan.d() != table.d()) {
      throw new IllegalStateException("the planner resolved " + plan.d() + " features, the table has " + table.d());
    }
    createDirectories(logs);
    System.out.printf(Locale.ROOT, "bench: child JVMs: %s %s -cp <this JVM's class path> ...%n", children.java(),
        String.join(" ", children.flags()));
    List<Timer.Case<?>> bodies = new ArrayList<>();
    for (Case c : Case.values()) {
      int[] round = {0};
      bodies.add(new Timer.Case<>(c.word, () -> {
        int r = round[0]++;
        launch(children, c, r + 1, logs, arguments(c, children, jobs.get(r), table, complete, plan));
        return r;
      }));
    }
    List<Timer.Timed<?>> timed = Timer.runInTurn(spark.sparkContext(), 0, reps, bodies);
    Map<Case, Timing> wall = new EnumMap<>(Case.class);
    for (Case c : Case.values()) {
      wall.put(c, timed.get(c.ordinal()).timing());
    }
    List<Map<String, Double>> stages = new ArrayList<>();
    long rowsRead = -1;
    for (int r = 1; r <= reps; r++) {
      stages.add(timings(work.resolve("fit-output-" + r).resolve("summary.json")));
      rowsRead = rowsRead(logs.resolve(logName(Case.READ_ONLY, r, "out")));
      if (rowsRead != table.rows()) {
        throw new IllegalStateException("the read-only process read " + rowsRead + " rows, the table has "
            + table.rows());
      }
    }
    return new ProcessResult(table, complete, children, wall, stages, rowsRead, plan.splits());
  }

  /** The main class and arguments of case {@code c}'s child. */
  private static List<String> arguments(Case c, Children children, Path job, BenchTable table, Complete complete,
      JobPlan plan) {
    String profile = children.profile().toString();
    List<String> args = new ArrayList<>();
    switch (c) {
      case FIT -> args.addAll(List.of(COMMAND_LINE, "run", job.toString(), "--env", profile));
      case START_ONLY -> args.addAll(List.of(ProcessCases.class.getName(), ProcessCases.START_ONLY, job.toString(),
          profile, table.path(), "0"));
      case READ_ONLY -> {
        args.addAll(List.of(ProcessCases.class.getName(), ProcessCases.READ_ONLY, job.toString(), profile,
            table.path(), Long.toString(plan.splitBytes())));
        args.addAll(plan.features());
      }
      case BUILTIN_PCA, BUILTIN_PCA_COMPLETE, BUILTIN_PCA_NO_CODEGEN -> {
        args.addAll(List.of(ProcessCases.class.getName(), c == Case.BUILTIN_PCA_NO_CODEGEN
            ? ProcessCases.BUILTIN_PCA_NO_CODEGEN : ProcessCases.BUILTIN_PCA, job.toString(), profile,
            c == Case.BUILTIN_PCA_COMPLETE ? complete.path() : table.path(), "0"));
        args.addAll(table.features());
      }
    }
    return args;
  }

  /**
   * Starts the child, waits for its exit, its output in {@code logs}.
   *
   * @throws IllegalStateException when it exits with another code than 0, with its last lines
   */
  private static void launch(Children children, Case c, int rep, Path logs, List<String> mainAndArgs) {
    Path out = logs.resolve(logName(c, rep, "out"));
    Path err = logs.resolve(logName(c, rep, "err"));
    ProcessBuilder builder = new ProcessBuilder(children.command(mainAndArgs.get(0), mainAndArgs.subList(1,
        mainAndArgs.size()))).redirectOutput(out.toFile()).redirectError(err.toFile());
    Process p;
    try {
      p = builder.start();
    } catch (IOException e) {
      throw new UncheckedIOException("cannot start the " + c.word + " process", e);
    }
    int code;
    try {
      code = p.waitFor();
    } catch (InterruptedException e) {
      p.destroyForcibly();
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted while the " + c.word + " process ran", e);
    }
    if (code != 0) {
      throw new IllegalStateException(String.format(Locale.ROOT, "the %s process (repetition %d) exited with %d; "
          + "its last lines:%n%s%s", c.word, rep, code, lastLines(err), lastLines(out)));
    }
  }

  private static String logName(Case c, int rep, String stream) {
    return c.word + "-" + rep + "." + stream;
  }

  private static String lastLines(Path file) {
    try {
      List<String> lines = Files.readAllLines(file, StandardCharsets.UTF_8);
      StringBuilder s = new StringBuilder();
      lines.subList(Math.max(0, lines.size() - LAST_LINES), lines.size()).forEach(l -> s.append("  ").append(l)
          .append('\n'));
      return s.toString();
    } catch (IOException e) {
      return "  (cannot read " + file + ": " + e.getMessage() + ")\n";
    }
  }

  /** The fit job of the main cases ({@link BenchJobs#fit}, covariance), overwriting {@code output}, as a file. */
  private static Path writeJob(Path file, BenchTable table, List<String> columns, Path output) {
    String text = "name = " + BenchJobs.quote(BenchJobs.fitName("covariance")) + "\n"
        + BenchJobs.fitHocon(table, columns, "covariance", output.toString()) + "\noutput.mode = overwrite\n";
    try {
      createDirectories(file.getParent());
      Files.writeString(file, text, StandardCharsets.UTF_8);
      return file;
    } catch (IOException e) {
      throw new UncheckedIOException("cannot write " + file, e);
    }
  }

  /**
   * The plan of {@code settings} as the children's session makes it: their split size depends on the tasks run at
   * once, so the plan is made with that many here.
   */
  private static JobPlan planAsChildren(SparkSession spark, JobSettings settings, int slots) {
    return SessionSettings.with(spark.conf(), Map.of(LEAF_SLOTS, Integer.toString(slots)),
        () -> Planner.plan(spark, settings));
  }

  /**
   * The copy of {@code table} with its feature columns only and without the rows that miss one (what the engine's
   * PCA skips), under the data folder beside the table; reused while its specification is unchanged.
   */
  static Complete complete(SparkSession spark, BenchTable table) {
    Path dir = Path.of(table.path() + "-complete");
    String spec = table.spec() + "\ncomplete copy: the " + table.d() + " features only, rows with a missing "
        + "feature dropped\neigenmill " + Version.current() + "\n";
    double seconds = 0;
    if (!spec.equals(BenchTables.readSpec(dir))) {
      System.out.printf(Locale.ROOT, "bench: copying %s without missing values, features only, into %s%n",
          table.path(), dir);
      long t0 = System.nanoTime();
      BenchTables.deleteTree(dir);
      Column[] features = table.features().stream().map(f -> functions.col(Floors.quoted(f)))
          .toArray(Column[]::new);
      spark.read().parquet(table.path()).select(features).na().drop(table.features().toArray(new String[0]))
          .write().mode(SaveMode.ErrorIfExists).parquet(dir.toString());
      BenchTables.writeSpec(dir, spec);
      seconds = (System.nanoTime() - t0) / 1e9;
    } else {
      System.out.printf(Locale.ROOT, "bench: reusing %s%n", dir);
    }
    return new Complete(dir.toString(), spark.read().parquet(dir.toString()).count(), seconds);
  }

  /** conf/local.conf of the repository (the script's eigenmill.bench.home, or the build's eigenmill.repo). */
  static Path localProfile() {
    for (String property : List.of("eigenmill.bench.home", "eigenmill.repo")) {
      String home = System.getProperty(property);
      if (home != null && Files.isRegularFile(Path.of(home, "conf", "local.conf"))) {
        return Path.of(home, "conf", "local.conf").toAbsolutePath().normalize();
      }
    }
    Path here = Path.of("conf", "local.conf").toAbsolutePath().normalize();
    if (Files.isRegularFile(here)) {
      return here;
    }
    throw new IllegalStateException("cannot find conf/local.conf: run local-demo/bench, which passes the "
        + "repository as -Deigenmill.bench.home");
  }

  /**
   * This JVM's flags for a child: the heap replaced by {@code heap}, and without a debugger agent (a second JVM
   * cannot listen on the same port).
   */
  static List<String> flags(List<String> inputArguments, String heap) {
    List<String> out = new ArrayList<>();
    out.add("-Xmx" + heap);
    for (String a : inputArguments) {
      boolean heapFlag = a.startsWith("-Xmx") || a.startsWith("-Xms") || a.startsWith("-XX:MaxHeapSize=")
          || a.startsWith("-XX:InitialHeapSize=");
      boolean debugger = a.startsWith("-agentlib:jdwp") || a.startsWith("-Xrunjdwp");
      if (!heapFlag && !debugger) {
        out.add(a);
      }
    }
    return out;
  }

  /** The tasks a local master runs at once: local (1), local[N], local[*] (the processors), local[N, F]. */
  static int slots(String master) {
    if (master.equals("local")) {
      return 1;
    }
    Matcher m = Pattern.compile("local\\[(\\*|\\d+)(,\\s*\\d+)?]").matcher(master.strip());
    if (!m.matches()) {
      throw new IllegalStateException("the profile's Spark master " + master + " is not local: the whole-process "
          + "cases run on the local runner's profile");
    }
    return m.group(1).equals("*") ? Runtime.getRuntime().availableProcessors() : Integer.parseInt(m.group(1));
  }

  /** summary.json's {@code timings_seconds}, in its order. */
  static Map<String, Double> timings(Path summary) {
    try {
      JsonNode node = new ObjectMapper().readTree(summary.toFile()).path("timings_seconds");
      if (!node.isObject() || node.isEmpty()) {
        throw new IllegalStateException(summary + " has no timings_seconds");
      }
      Map<String, Double> out = new LinkedHashMap<>();
      for (Iterator<Map.Entry<String, JsonNode>> it = node.fields(); it.hasNext(); ) {
        Map.Entry<String, JsonNode> e = it.next();
        out.put(e.getKey(), e.getValue().asDouble());
      }
      return out;
    } catch (IOException e) {
      throw new UncheckedIOException("cannot read the fit's " + summary, e);
    }
  }

  private static long rowsRead(Path out) {
    try {
      for (String line : Files.readAllLines(out, StandardCharsets.UTF_8)) {
        if (line.startsWith(ProcessCases.ROWS_READ)) {
          return Long.parseLong(line.substring(ProcessCases.ROWS_READ.length()).strip());
        }
      }
      throw new IllegalStateException("the read-only process printed no \"" + ProcessCases.ROWS_READ + "\" line in "
          + out);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot read " + out, e);
    }
  }

  private static void createDirectories(Path dir) {
    try {
      Files.createDirectories(dir);
    } catch (IOException e) {
      throw new UncheckedIOException("cannot create " + dir, e);
    }
  }

  static String render(ProcessResult r, List<String> header) {
    StringBuilder s = new StringBuilder(String.format(Locale.ROOT, "## Whole processes: %,d rows x %d features%n%n",
        r.table().rows(), r.table().d()));
    int reps = r.wall().get(Case.START_ONLY).repetitions();
    for (String h : header) {
      s.append(h.startsWith("- repetitions:") ? "- repetitions: " + reps + " per case, timed in turn (repetition 1 "
          + "of every case, then repetition 2, ...), no warm-up: every process starts cold; wall seconds from "
          + "starting the child JVM to its exit; net of start-up: less the start-only process of the same round"
          : h).append('\n');
    }
    s.append("- table: `").append(r.table().path()).append("` (").append(r.table().spec()).append(r.table()
        .generatedSeconds() > 0 ? String.format(Locale.ROOT, "; generated in %.0f s", r.table().generatedSeconds())
        : "; reused").append("), the main cases' table\n");
    Complete c = r.complete();
    s.append(String.format(Locale.ROOT, "- complete copy: `%s`, the %d features only, the %,d of %,d rows without "
        + "a missing feature (%s)%n", c.path(), r.table().d(), c.rows(), r.table().rows(), c.writtenSeconds() > 0
        ? String.format(Locale.ROOT, "written in %.0f s", c.writtenSeconds()) : "reused"));
    Children ch = r.children();
    s.append("- child JVMs: `").append(ch.java()).append("`, ").append(ch.flags().get(0)).append(" (the local "
        + "runner's heap: EIGENMILL_DRIVER_MEMORY, default ").append(DEFAULT_HEAP).append("), then this JVM's other "
        + "flags `").append(String.join(" ", ch.flags().subList(1, ch.flags().size()))).append("`, this JVM's "
        + "class path and environment (OPENBLAS_NUM_THREADS=").append(env("OPENBLAS_NUM_THREADS"))
        .append(", OPENBLAS_CORETYPE=").append(env("OPENBLAS_CORETYPE")).append(")\n");
    s.append("- every child's session: the job file over `").append(ch.profile()).append("`, master ")
        .append(ch.master()).append(" (").append(ch.slots()).append(" tasks at once), opened by `Sessions.open` "
        + "(the command line's) and stopped by `Sessions.closeIfOwned`\n");
    s.append("- read-only reads in the fit's splits: ").append(r.splits() == null ? "not planned"
        : r.splits().line()).append(String.format(Locale.ROOT, "; %,d rows read%n%n", r.rowsRead()));
    List<List<String>> rows = new ArrayList<>();
    for (Case k : Case.values()) {
      Timing t = r.wall().get(k);
      boolean base = k == Case.START_ONLY;
      Timing net = base ? null : new Timing(r.net(k));
      rows.add(List.of(k.word, Integer.toString(t.repetitions()), Report.seconds(t.median()), range(t),
          base ? "(start-up)" : Report.seconds(net.median()), base ? "" : range(net), k.what));
    }
    s.append(Report.table(List.of("process", "reps", "median s", "min-max s", "net of start-up: median s",
        "net min-max s", "what the process does"), rows)).append('\n');
    List<Ratio> ratios = r.ratios();
    s.append("### Ratios and targets\n\nRatios of the median net times.\n\n").append(Report.table(List.of("ratio",
        "value", "target", "verdict"), MainReport.ratioRows(ratios))).append('\n');
    s.append("Timed in turn, repetition by repetition (net times of the same round):\n\n");
    MainReport.inTurnLines(ratios).forEach(line -> s.append("- ").append(line).append('\n'));
    s.append("\n### The fit's fixed cost\n\n");
    s.append("- ").append(fixedCostLine(r)).append('\n');
    s.append("- pass stages (summary.json `timings_seconds`: ").append(String.join(", ", PASS_STAGES))
        .append(", those present): median ").append(Report.seconds(new Timing(r.passSeconds()).median()))
        .append(" s of the fit's net ").append(Report.seconds(r.netMedian(Case.FIT))).append(" s\n");
    s.append("- the fit's stages, median over repetitions (settings and spark-start are start-up, which "
        + "start-only pays too): ").append(stagesLine(r.medianStages())).append('\n');
    return s.toString();
  }

  /** "fit fixed cost (net process - pass stages): 2.41 s (2.38, 2.41, 2.60); target < 1 s: missed by 1.41 s". */
  static String fixedCostLine(ProcessResult r) {
    double v = r.fixedCost();
    List<String> each = Arrays.stream(r.fixedCosts()).mapToObj(Report::number).toList();
    long met = Arrays.stream(r.fixedCosts()).filter(x -> x < FIXED_COST_TARGET).count();
    return String.format(Locale.ROOT, "fit fixed cost (net process - pass stages): %s s, by repetition %s; target "
        + "< %s s: %s (met by %d of %d)", Report.number(v), String.join(", ", each), Report.number(FIXED_COST_TARGET),
        r.fixedCostMet() ? "met" : "missed by " + Report.number(v - FIXED_COST_TARGET) + " s", met, each.size());
  }

  private static String stagesLine(Map<String, Double> stages) {
    List<String> parts = new ArrayList<>();
    stages.forEach((k, v) -> parts.add(k + " " + Report.seconds(v) + " s"));
    return String.join(", ", parts);
  }

  private static String range(Timing t) {
    double max = Arrays.stream(t.seconds()).max().orElse(Double.NaN);
    return Report.seconds(t.min()) + " - " + Report.seconds(max);
  }

  private static String env(String name) {
    String v = System.getenv(name);
    return v == null ? "unset" : v;
  }

  /** The medians, ratios and the fixed cost as console lines. */
  static void print(ProcessResult r) {
    System.out.println();
    for (Case k : Case.values()) {
      Timing t = r.wall().get(k);
      System.out.printf(Locale.ROOT, "bench: %-22s median %8.3f s  net of start-up %s%n", k.word, t.median(),
          k == Case.START_ONLY ? "-" : Report.seconds(r.netMedian(k)) + " s");
    }
    for (Ratio q : r.ratios()) {
      System.out.printf(Locale.ROOT, "bench: %-68s %10s  %-8s %s%n", q.name(), Report.number(q.value()),
          q.target() == null ? "" : q.target().describe(), q.verdict());
    }
    MainReport.inTurnLines(r.ratios()).forEach(line -> System.out.println("bench: in turn, " + line));
    System.out.println("bench: " + fixedCostLine(r));
    System.out.println("bench: fit stages (medians): " + stagesLine(r.medianStages()));
  }
}
