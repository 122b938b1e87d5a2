package io.eigenmill.bench;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.bench.MainResult.CaseResult;
import io.eigenmill.bench.MainResult.MethodAccuracy;
import io.eigenmill.bench.WideRun.WideCase;
import io.eigenmill.bench.WideRun.WideResult;
import io.eigenmill.testing.SparkSuite;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The benchmark harness on tiny tables, in-process: every case measured, ratios and accuracy sane, the results file
 * with one row per case; the read floor sums what SQL sums; the allocation record and heap watch see a large array;
 * the results file keeps the sections of other runs. Times are never compared with anything but zero.
 */
class BenchmarkSmokeTest extends SparkSuite {
  private static final Path BASE = io.eigenmill.testing.BuildDir.resolve("bench-smoke")
      .toAbsolutePath();
  private static final Path DATA = BASE.resolve("data");

  @BeforeAll
  static void clean() {
    BenchTables.deleteTree(BASE.resolve("out"));
  }

  private static BenchOptions options(String... extra) {
    String[] base = {"--smoke", "--rows", "20000", "--features", "20", "--data", DATA.toString()};
    String[] args = new String[base.length + extra.length];
    System.arraycopy(base, 0, args, 0, base.length);
    System.arraycopy(extra, 0, args, base.length, extra.length);
    return BenchOptions.parse(args, BASE);
  }

  @Test
  void smokeRunMeasuresEveryCaseAndWritesOneRowPerCase() throws IOException {
    Path out = BASE.resolve("out/BENCHMARKS.md");
    MainResult r = Benchmark.run(spark, options("--out", out.toString())).main();

    assertEquals(List.of(BenchCase.values()), r.cases().stream().map(CaseResult::which).toList());
    for (CaseResult c : r.cases()) {
      assertEquals(1, c.timing().repetitions(), c.which().word());
      assertTrue(c.timing().min() > 0, c.which().word() + " took " + c.timing().min() + " s");
    }
    // every ratio of the harness is defined once all cases ran: 13 of them, each finite and positive
    assertEquals(13, r.ratios().size(), r.ratios().toString());
    for (Ratio q : r.ratios()) {
      assertTrue(Double.isFinite(q.value()) && q.value() > 0, q.name() + " = " + q.value());
      // the two sides of these were timed in turn: one repetition each here, so the pair's ratio is the ratio
      boolean paired = q.name().equals("fit-covariance / read-floor") || q.name().equals("builtin-kmeans / kmeans");
      assertEquals(paired ? 1 : 0, q.inTurn().length, q.name());
      if (paired) {
        assertEquals(q.value(), q.inTurn()[0], 1e-12 * q.value(), q.name());
      }
    }
    checkAccuracy(r);
    assertTrue(Double.isFinite(r.kmeans().ours()) && r.kmeans().ours() > 0, "our wcss " + r.kmeans().ours());
    assertTrue(Double.isFinite(r.kmeans().builtin()) && r.kmeans().builtin() > 0,
        "the engine's wcss " + r.kmeans().builtin());

    List<String> lines = Files.readAllLines(out);
    for (BenchCase c : BenchCase.values()) {
      long rows = lines.stream().filter(l -> l.startsWith("| " + c.word() + " |")).count();
      assertEquals(1, rows, "rows of case " + c.word() + " in " + out);
    }
    assertTrue(lines.stream().anyMatch(l -> l.startsWith("- command: `local-demo/bench --smoke")), "command line");
    assertTrue(lines.stream().anyMatch(l -> l.startsWith("- BLAS/LAPACK: BLAS ")), "BLAS line");
  }

  @Test
  void longSmokeOptionsRunOnlyTheLongCaseOnATinyTable() {
    BenchOptions o = BenchOptions.parse(new String[] {"--long", "--smoke"}, BASE);
    assertTrue(o.longInput() && o.smoke());
    assertFalse(o.groups() || o.windows() || o.wide() || o.scaling());
    assertEquals(BenchOptions.SMOKE_ROWS, o.rows());
    assertEquals(BenchOptions.SMOKE_FEATURES, o.features());
    assertEquals(0, o.warmups());
    assertEquals(1, o.repetitions());
    BenchOptions full = BenchOptions.parse(new String[] {"--long"}, BASE);
    assertEquals(BenchOptions.LONG_ROWS, full.rows(), "the long case's main table unless --rows");
    assertEquals(BenchOptions.DEFAULT_FEATURES, full.features());
    assertEquals(1234, BenchOptions.parse(new String[] {"--long", "--rows", "1234"}, BASE).rows());
    org.junit.jupiter.api.Assertions.assertThrows(IllegalArgumentException.class,
        () -> BenchOptions.parse(new String[] {"--long", "--groups"}, BASE));
    assertTrue(BenchOptions.USAGE.contains("--long"));
  }

  @Test
  void longSmokeRunFitsTheSameModelBothWaysAndWritesItsSection() throws IOException {
    Path out = BASE.resolve("out/long.md");
    Files.deleteIfExists(out);
    BenchOptions o = options("--long", "--out", out.toString());
    LongRun.LongResult r = LongRun.run(spark, o);
    assertTrue(r.agree(), r.check());
    assertEquals(20000L * 20, r.longRows() + nullCells(r.base()), "one long row per non-null cell");
    for (LongRun.LegResult l : r.legs().values()) {
      assertEquals(1, l.timing().repetitions(), l.leg().word);
      assertTrue(l.timing().min() > 0, l.leg().word);
    }
    assertEquals(3, r.ratios().size());
    Report.writeSection(out, "long", LongRun.render(r, List.of(), o.cores()));
    String text = Files.readString(out);
    assertTrue(text.contains("<!-- bench:long -->") && text.contains("| spark-pivot-fit / long-fit |"), text);
  }

  private static long nullCells(BenchTable t) {
    Dataset<Row> table = spark.read().parquet(t.path());
    Column[] nulls = t.features().stream().map(f -> functions.sum(functions.when(functions.col(f).isNull(), 1)
        .otherwise(0))).toArray(Column[]::new);
    Row r = table.agg(nulls[0], java.util.Arrays.copyOfRange(nulls, 1, nulls.length)).first();
    long n = 0;
    for (int j = 0; j < nulls.length; j++) {
      n += r.getLong(j);
    }
    return n;
  }

  @Test
  void processOptionsRunOnTheirOwnAndChildrenGetThisJvmsFlagsWithTheRunnersHeap() {
    BenchOptions o = BenchOptions.parse(new String[] {"--process", "--smoke"}, BASE);
    assertTrue(o.process() && o.smoke());
    assertEquals(1, o.repetitions());
    assertEquals(BenchOptions.SMOKE_ROWS, o.rows(), "the main table (the smoke one here)");
    assertEquals(2, BenchOptions.parse(new String[] {"--process", "--reps", "2"}, BASE).repetitions());
    for (String other : List.of("--groups", "--windows", "--wide", "--long", "--tables", "--scaling")) {
      IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
          () -> BenchOptions.parse(new String[] {"--process", other}, BASE));
      assertTrue(e.getMessage().startsWith("--process runs only its own cases"), other + ": " + e.getMessage());
    }
    assertThrows(IllegalArgumentException.class,
        () -> BenchOptions.parse(new String[] {"--process", "--cases", "fit-covariance"}, BASE));
    assertTrue(BenchOptions.USAGE.contains("--process"));
    // the heap is the runner's, every other flag this JVM's, a debugger agent left out (its port is taken)
    assertEquals(List.of("-Xmx4g", "--add-opens=java.base/java.lang=ALL-UNNAMED", "-Dx=y"), ProcessRun.flags(List.of(
        "-Xmx8g", "--add-opens=java.base/java.lang=ALL-UNNAMED", "-Xms1g",
        "-agentlib:jdwp=transport=dt_socket,server=y,address=5005", "-Dx=y"), "4g"));
    assertEquals(1, ProcessRun.slots("local"));
    assertEquals(3, ProcessRun.slots("local[3]"));
    assertEquals(Runtime.getRuntime().availableProcessors(), ProcessRun.slots("local[*]"));
    assertTrue(ProcessRun.localProfile().endsWith(Path.of("conf", "local.conf")));
  }

  @Test
  void processTimesAreNetOfTheStartOnlyProcessOfTheSameRound() throws IOException {
    Map<ProcessRun.Case, Timing> wall = new java.util.EnumMap<>(ProcessRun.Case.class);
    wall.put(ProcessRun.Case.START_ONLY, new Timing(new double[] {5, 6, 5}));
    wall.put(ProcessRun.Case.READ_ONLY, new Timing(new double[] {8, 10, 7}));
    wall.put(ProcessRun.Case.FIT, new Timing(new double[] {9, 11, 8}));
    wall.put(ProcessRun.Case.BUILTIN_PCA, new Timing(new double[] {20, 21, 19}));
    wall.put(ProcessRun.Case.BUILTIN_PCA_COMPLETE, new Timing(new double[] {10, 12, 10}));
    wall.put(ProcessRun.Case.BUILTIN_PCA_NO_CODEGEN, new Timing(new double[] {15, 16, 14}));
    List<Map<String, Double>> stages = List.of(
        Map.of("settings", 1.0, "moments", 2.0, "covariance", 0.4, "model", 0.1),
        Map.of("settings", 1.2, "moments", 2.5, "covariance", 0.4, "model", 0.1),
        Map.of("settings", 0.8, "moments", 2.0, "covariance", 0.3, "model", 0.1, "report", 0.2));
    ProcessRun.ProcessResult r = new ProcessRun.ProcessResult(new BenchTable("/t", 1000, List.of("a", "b"),
        List.of("host"), "spec", 0), new ProcessRun.Complete("/t-complete", 900, 0), new ProcessRun.Children(
        "java", List.of("-Xmx4g", "--add-modules=jdk.incubator.vector"), "cp", Path.of("conf/local.conf"),
        "local[*]", 2), wall, stages, 1000, null);

    assertArrayEquals(new double[] {4, 5, 3}, r.net(ProcessRun.Case.FIT));
    Ratio fit = r.ratios().get(0);
    assertEquals("fit process / read-only process (net of start-up)", fit.name());
    assertEquals(4.0 / 3, fit.value(), 1e-12, "median net fit over median net read");
    assertArrayEquals(new double[] {4.0 / 3, 5.0 / 4, 3.0 / 2}, fit.inTurn(), 1e-12);
    assertEquals(Ratio.Target.atMost(1.5), fit.target());
    Ratio engineBest = r.ratios().get(2);
    assertEquals("builtin-pca-no-codegen process / fit process (net of start-up)", engineBest.name());
    assertEquals(10.0 / 4, engineBest.value(), 1e-12, "median net 10 over median net 4");
    // fixed cost: net less moments + covariance + model of the same repetition; median of 1.5, 2.0, 0.6
    assertArrayEquals(new double[] {1.5, 2.0, 0.6}, r.fixedCosts(), 1e-12);
    assertEquals(1.5, r.fixedCost(), 1e-12);
    assertFalse(r.fixedCostMet());
    assertEquals(0.2, r.medianStages().get("report"), 1e-12, "a stage of one repetition: its one value");

    String md = ProcessRun.render(r, List.of("- repetitions: replaced"));
    assertTrue(md.contains("| fit | 3 | 9.000 | 8.000 - 11.000 | 4.000 | 3.000 - 5.000 |"), md);
    assertTrue(md.contains("| fit process / read-only process (net of start-up) | 1.33 | <= 1.50 | met |"), md);
    assertTrue(md.contains("fit fixed cost (net process - pass stages): 1.50 s, by repetition 1.50, 2.00, 0.600; "
        + "target < 1.00 s: missed by 0.500 s (met by 1 of 3)"), md);
    assertFalse(md.contains("replaced"), "the repetitions line says how processes are timed");

    Path summary = BASE.resolve("out/process-summary.json");
    Files.createDirectories(summary.getParent());
    Files.writeString(summary, "{\"name\": \"x\", \"timings_seconds\": {\"settings\": 0.5, \"moments\": 2.25, "
        + "\"summary\": 0.01}}");
    Map<String, Double> timings = ProcessRun.timings(summary);
    assertEquals(List.of("settings", "moments", "summary"), List.copyOf(timings.keySet()), "summary.json's order");
    assertEquals(2.25, timings.get("moments"));
  }

  @Test
  void casesTimedInTurnAlternateTheirRepetitionsAfterAllWarmUps() {
    List<String> order = new java.util.ArrayList<>();
    List<Timer.Timed<?>> t = Timer.runInTurn(spark.sparkContext(), 1, 2, List.of(
        new Timer.Case<>("a", () -> order.add("a")), new Timer.Case<>("b", () -> order.add("b"))));
    assertEquals(List.of("a", "b", "a", "b", "a", "b"), order, "warm-ups a, b; then a, b twice");
    assertEquals(2, t.size());
    assertEquals(2, t.get(0).timing().repetitions());
    assertEquals(2, t.get(1).timing().repetitions());
  }

  private static void checkAccuracy(MainResult r) {
    // The three methods estimate the same leading eigenvalue of the same correlation matrix: covariance and TSQR
    // exactly up to rounding (~1e-13 on 20 standardised features), the randomized method after 2 power iterations
    // with a sketch of 20 columns on 20 features, i.e. the whole space, so to rounding as well. 1e-6 is the
    // agreement asked of the harness.
    double lead = r.accuracyOf("covariance").orElseThrow().leadingShares()[0];
    assertTrue(lead > 0 && lead < 1, "leading ratio " + lead);
    for (String method : List.of("tsqr", "randomized")) {
      MethodAccuracy a = r.accuracyOf(method).orElseThrow();
      assertEquals(lead, a.leadingShares()[0], 1e-6, method + " leading explained-variance ratio");
      // the k = 10 subspaces of exact methods agree to rounding divided by the eigengap after component 10
      assertTrue(a.largestAngle() >= 0 && a.largestAngle() < 1e-6, method + " largest angle " + a.largestAngle());
      // the first 3 eigenvalues are well separated on this table, so their subspace agrees to rounding too
      assertTrue(a.largestLeadingAngle() >= 0 && a.largestLeadingAngle() < 1e-6, method + " first-3 angle "
          + a.largestLeadingAngle());
    }
    double gap = r.accuracyOf("covariance").orElseThrow().gapAfterK();
    assertTrue(gap >= 1, "eigenvalues are sorted descending, so eigenvalue 10 / 11 >= 1: " + gap);
    MethodAccuracy engine = r.accuracyOf("builtin-pca").orElseThrow();
    assertFalse(engine.scaled());
    assertTrue(engine.leadingShares()[0] > 0 && engine.leadingShares()[0] <= 1, "engine's leading ratio");
  }

  @Test
  void readFloorSumsWhatSqlSums() {
    BenchTable table = BenchTables.prepare(spark, DATA, 20000, 20);
    Dataset<Row> t = spark.read().parquet(table.path());
    double[] sql = Floors.sqlSum(t, table.features());
    double[] columnar = Floors.readFloor(t, table.features());
    assertEquals(20000, columnar[table.d()], "rows read by the read floor");
    Column[] absSums = table.features().stream().map(f -> functions.sum(functions.abs(functions.col(f))))
        .toArray(Column[]::new);
    Row scales = t.agg(absSums[0], java.util.Arrays.copyOfRange(absSums, 1, absSums.length)).first();
    for (int j = 0; j < table.d(); j++) {
      // the two differ only in summation order: each is within n eps sum|x| of the exact sum (Higham 2002, 4.2)
      double bound = 2 * 20000 * Math.ulp(1.0) * ((Number) scales.get(j)).doubleValue();
      assertEquals(sql[j], columnar[j], bound, table.features().get(j));
    }
  }

  @Test
  void wideCasesReportHeapAndLargestAllocation() {
    BenchOptions o = options();
    List<WideResult> wide = WideRun.run(spark, o, List.of(new WideCase(30, "covariance", 30_000),
        new WideCase(60, "randomized", 30_000)), 1);
    assertEquals(2, wide.size());
    for (WideResult w : wide) {
      assertEquals(30_000 / w.which().d(), w.table().rows(), "rows of the wide table");
      assertTrue(w.floor().min() > 0, "read floor timed");
      assertEquals(w.timing().repetitions(), w.floor().repetitions(), "fit and floor timed in turn");
      assertTrue(w.timing().min() > 0, "time");
      assertTrue(w.peakHeapBytes() > 0 && w.peakHeapBytes() <= w.maxHeapBytes(), "peak heap " + w.peakHeapBytes());
      assertEquals(8L * w.which().d() * w.which().d(), w.squareBytes());
      assertTrue(w.columnar(), "the fit read columnar batches");
    }
    String md = WideRun.render(wide, List.of());
    // each case in the heap table and in the table against the read floor
    assertEquals(4, md.lines().filter(l -> l.startsWith("| 30 |") || l.startsWith("| 60 |")).count(), md);
    assertTrue(md.contains("d = 60 randomized: fit / (" + wide.get(1).passes() + " passes x read floor)"), md);
  }

  @Test
  void allocationRecordAndHeapWatchSeeALargeArray() {
    long size = 32L << 20;
    double[] big;
    long peak;
    LargeAllocations.Summary s;
    try (HeapWatch heap = HeapWatch.start(); LargeAllocations record = LargeAllocations.start()) {
      big = new double[(int) (size / Double.BYTES)];
      big[big.length - 1] = 1;
      s = record.stop(size);
      peak = heap.peakBytes();
    }
    assertTrue(big[big.length - 1] == 1);
    assertTrue(s.atLeastThreshold() >= 1, "allocations of at least 32 MiB: " + s);
    assertTrue(s.largestBytes() >= size, "largest " + s);
    assertEquals("double[]", s.largestType());
    assertTrue(peak >= size, "peak heap " + peak);
  }

  @Test
  void resultsFileKeepsTheSectionsOfOtherRuns() throws IOException {
    Path file = BASE.resolve("out/sections.md");
    Files.deleteIfExists(file);
    Report.writeSection(file, "wide", "wide one\n");
    Report.writeSection(file, "main", "main one\n");
    Report.writeSection(file, "main", "main two\n");
    String text = Files.readString(file);
    assertTrue(text.contains("main two") && !text.contains("main one"), text);
    assertTrue(text.contains("wide one"), text);
    assertTrue(text.indexOf("main two") < text.indexOf("wide one"), "sections in order: " + text);
  }

  @Test
  void inTurnLinesCountThePairsThatMeetTheTarget() {
    Ratio fit = new Ratio("fit-covariance / read-floor", 1.15, Ratio.Target.atMost(1.2), new double[] {1.1, 1.3, 1.15});
    Ratio plain = new Ratio("fit-covariance / sql-sum", 0.6, Ratio.Target.atMost(0.8));
    assertEquals(List.of("fit-covariance / read-floor: 1.10, 1.30, 1.15 (target <= 1.20: met by 2 of 3)"),
        MainReport.inTurnLines(List.of(fit, plain)));
  }

  @Test
  void verdictsSayHowFarATargetIsMissed() {
    assertEquals("met", new Ratio("a", 1.1, Ratio.Target.atMost(1.2)).verdict());
    assertEquals("missed: needs 1.25x less time", new Ratio("a", 1.5, Ratio.Target.atMost(1.2)).verdict());
    assertEquals("missed: needs 1.50x less time", new Ratio("b", 4, Ratio.Target.atLeast(6)).verdict());
    assertEquals("met", new Ratio("c", 1 + 1e-12, Ratio.Target.noWorseThan(1)).verdict());
    assertEquals("missed: 1.00% higher", new Ratio("c", 1.01, Ratio.Target.noWorseThan(1)).verdict());
  }
}
