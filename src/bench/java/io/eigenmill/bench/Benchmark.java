package io.eigenmill.bench;

import io.eigenmill.bench.ScalingRun.ScalingResult;
import io.eigenmill.bench.WideRun.WideResult;
import io.eigenmill.io.WriterSession;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.SparkSession;

/**
 * The benchmark suite: our fits, apply and k-means against the floors (a SQL sum and a columnar read of the same
 * columns, a plain Parquet write of the scores' shape) and against the engine's own PCA and k-means, with accuracy
 * beside speed, in one run; optionally scaling in rows, or (in a run of its own) wide tables with their peak heap, or a window refit
 * from moment snapshots against the data fit ({@code --windows}), or one model per group against one model and
 * against separate filtered fits ({@code --groups}), or the long-input fit against Spark's pivot followed by our
 * wide fit ({@code --long}), or whole processes (the command line's fit, a read, the engine's PCA) each in a JVM
 * of its own, net of starting and stopping Spark ({@code --process}).
 * Results go to a markdown file ({@code --out}) and the console. Run it with {@code local-demo/bench}; flags in
 * {@link BenchOptions#USAGE}.
 *
 * <p>Exit codes: 0 done, 2 bad arguments, 1 failure.
 */
public final class Benchmark {

  /** What one invocation measured; the parts it did not run are null. */
  public record Outcome(MainResult main, ScalingResult scaling, List<WideResult> wide, Path out) {}

  private Benchmark() {}

  public static void main(String[] args) {
    Path home = Path.of(System.getProperty("eigenmill.bench.home", ".")).toAbsolutePath().normalize();
    if (List.of(args).contains("--help") || List.of(args).contains("-h")) {
      System.out.println(BenchOptions.USAGE);
      System.exit(0);
      return;
    }
    BenchOptions options;
    try {
      options = BenchOptions.parse(args, home);
    } catch (IllegalArgumentException e) {
      System.err.println("bench: " + e.getMessage());
      System.err.println(BenchOptions.USAGE);
      System.exit(2);
      return;
    }
    int code = 0;
    SparkSession spark = session(options.cores());
    try {
      Outcome o = run(spark, options);
      System.out.println("bench: results written to " + o.out());
    } catch (RuntimeException | Error e) {
      System.err.println("bench: failed: " + e);
      e.printStackTrace(System.err);
      code = 1;
    } finally {
      spark.stop();
    }
    System.exit(code);
  }

  /**
   * Runs what {@code options} asks for on {@code spark} and writes the results file. The session's settings are
   * left as they were.
   */
  public static Outcome run(SparkSession spark, BenchOptions options) {
    try {
      return runCases(spark, options);
    } finally {
      BenchTables.deleteTree(ScalingRun.runWork(options));
    }
  }

  private static Outcome runCases(SparkSession spark, BenchOptions options) {
    Machine machine = Machine.describe();
    String loadBefore = Machine.loadAverage();
    System.out.printf(Locale.ROOT, "bench: %s; %s; heap %s%n", machine.describeHardware(), machine.blas(),
        Report.bytes(machine.maxHeapBytes()));
    if (options.process()) {
      ProcessRun.ProcessResult processes = ProcessRun.run(spark, options);
      ProcessRun.print(processes);
      Report.writeSection(options.out(), "process", ProcessRun.render(processes, Report.header(machine, options,
          loadBefore, Machine.loadAverage())));
      return new Outcome(null, null, null, options.out());
    }
    if (options.windows()) {
      WindowRun.WindowResult windows = WindowRun.run(spark, options);
      String body = WindowRun.render(windows, Report.header(machine, options, loadBefore, Machine.loadAverage()));
      System.out.println(body);
      Report.writeSection(options.out(), "windows", body);
      return new Outcome(null, null, null, options.out());
    }
    if (options.groups()) {
      GroupRun.GroupResult groups = GroupRun.run(spark, options, r -> Report.writeSection(options.out(), "groups",
          GroupRun.render(r, Report.header(machine, options, loadBefore, Machine.loadAverage()))));
      System.out.println(GroupRun.render(groups, Report.header(machine, options, loadBefore,
          Machine.loadAverage())));
      return new Outcome(null, null, null, options.out());
    }
    if (options.tables()) {
      TableRun.TableResult tables = TableRun.run(spark, options);
      if (tables != null) {
        String body = TableRun.render(tables, Report.header(machine, options, loadBefore, Machine.loadAverage()));
        System.out.println(body);
        Report.writeSection(options.out(), "tables", body);
      }
      return new Outcome(null, null, null, options.out());
    }
    if (options.longInput()) {
      LongRun.LongResult longInput = LongRun.run(spark, options);
      String body = LongRun.render(longInput, Report.header(machine, options, loadBefore, Machine.loadAverage()),
          options.cores());
      System.out.println(body);
      Report.writeSection(options.out(), "long", body);
      if (!longInput.agree()) {
        throw new IllegalStateException("the long fit and the Spark route gave different models: "
            + longInput.check());
      }
      return new Outcome(null, null, null, options.out());
    }
    if (options.wide()) {
      List<WideResult> wide = WideRun.run(spark, options, WideRun.CASES, options.smoke() ? WideRun.SMOKE_DIVISOR
          : 1);
      WideRun.print(wide);
      Report.writeSection(options.out(), "wide", WideRun.render(wide, Report.header(machine, options, loadBefore,
          Machine.loadAverage())));
      return new Outcome(null, null, wide, options.out());
    }
    BenchTable table = BenchTables.prepare(spark, options.data(), options.rows(), options.features());
    MainResult main = new MainCases(spark, table, allNumeric(spark, table), ScalingRun.workFor(options, table),
        options.warmups(), options.repetitions()).run(options.cases());
    MainReport.print(main);
    Report.writeSection(options.out(), "main", MainReport.render(main, Report.header(machine, options, loadBefore,
        Machine.loadAverage())));
    ScalingResult scaling = null;
    if (options.scaling()) {
      String scalingStart = Machine.loadAverage();
      scaling = ScalingRun.run(spark, options, main);
      Report.writeSection(options.out(), "scaling", ScalingRun.render(scaling, Report.header(machine, options,
          scalingStart, Machine.loadAverage())));
    }
    return new Outcome(main, scaling, null, options.out());
  }

  /** True when the table's features are all of its numeric non-key columns. */
  static boolean allNumeric(SparkSession spark, BenchTable table) {
    return BenchTables.numericColumns(spark.read().parquet(table.path()).schema()).equals(table.features());
  }

  /** The embedded session, configured as the local runner's profile (conf/local.conf) configures a job's. */
  static SparkSession session(int cores) {
    return SparkSession.builder()
        .appName("eigenmill benchmark")
        .master("local[" + cores + "]")
        .config("spark.ui.enabled", "false")
        .config("spark.driver.host", "127.0.0.1")
        .config("spark.driver.bindAddress", "127.0.0.1")
        .config("spark.sql.shuffle.partitions", "8")
        .config("spark.sql.session.timeZone", "UTC")
        .config("spark.sql.codegen.maxFields", "10000")
        .config("spark.executorEnv.OPENBLAS_NUM_THREADS", "1")
        // the scores and the write floor write timestamps as the jobs do (WriterSession)
        .config(WriterSession.TIMESTAMP_TYPE, WriterSession.MICROS)
        .getOrCreate();
  }
}
