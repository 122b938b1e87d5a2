package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.io.LongTable;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.Choices;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.FleetFixture;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Timestamp;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.Test;

/**
 * The "Long input" section: a tiny long table (4 hosts, 6 five-minute buckets, 4 metrics of which one is sparse and
 * one is not a column name) run through the job; the same fit on a wide table has no such section; and a pivot of
 * 80 metrics (the fleet fixture's records with a pivot attached) draws the 60 least present.
 */
class LongInputSectionTest extends SparkSuite {
  static final StructType LONG = new StructType().add("host", DataTypes.StringType)
      .add("ts", DataTypes.TimestampType).add("metric", DataTypes.StringType).add("value", DataTypes.DoubleType);
  static final StructType WIDE = new StructType().add("host", DataTypes.StringType)
      .add("ts", DataTypes.TimestampType).add("cpu", DataTypes.DoubleType).add("load", DataTypes.DoubleType)
      .add("mem", DataTypes.DoubleType);
  static final long T0 = 1_795_000_200L; // a multiple of 300 s

  static String section(String html) {
    Matcher m = Pattern.compile("<section id=\"section-long-input\".*?</section>", Pattern.DOTALL).matcher(html);
    assertTrue(m.find(), "the page has a long-input section");
    return m.group();
  }

  /** Host h, bucket b: two samples of cpu, load and mem.used% each; disk_errors once per host; one null value. */
  private static Path longTable(Path dir) {
    List<Row> rows = new ArrayList<>();
    SplittableRandom r = new SplittableRandom(5);
    for (int h = 0; h < 4; h++) {
      for (int b = 0; b < 6; b++) {
        for (int s = 0; s < 2; s++) {
          Timestamp t = new Timestamp((T0 + 300L * b + 40 + 100 * s + r.nextInt(30)) * 1000);
          double base = r.nextDouble();
          rows.add(RowFactory.create("edge-" + h, t, "cpu", 20 + 50 * base + r.nextDouble()));
          rows.add(RowFactory.create("edge-" + h, t, "load", 1 + 3 * base + r.nextDouble()));
          rows.add(RowFactory.create("edge-" + h, t, "mem.used%", 40 + 10 * r.nextDouble()));
        }
      }
      rows.add(RowFactory.create("edge-" + h, new Timestamp((T0 + 10) * 1000), "disk_errors", 1.0));
    }
    rows.add(RowFactory.create("edge-0", new Timestamp((T0 + 12) * 1000), "cpu", null));
    Path out = dir.resolve("long");
    spark.createDataFrame(rows, LONG).repartition(2).write().parquet(out.toString());
    return out;
  }

  @Test
  void aLongTableJobShowsThePivotThePresenceOfEachMetricAndTheRenamedOne() throws Exception {
    Path dir = JobFiles.scratch("long-report");
    Path table = longTable(dir);
    Path out = dir.resolve("out");
    RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + table + "\"\ninput.layout = long\n"
        + "input.long { entity = [host], time = ts, bucket = \"5 minutes\" }\nreduce.components = 1\n"
        + "output.path = \"" + out + "\""));
    String mem = LongTable.columnName("mem.used%");
    assertEquals(List.of("cpu", "load", mem), run.fit().model().features(), "disk_errors (4 of 24 rows) dropped");
    String html = Files.readString(out.resolve("report.html"), StandardCharsets.UTF_8);
    String s = section(html);
    assertTrue(s.contains("<h2 id=\"section-long-input-h\">Long input</h2>"), s);
    List<String> ids = ReportModel.of(run).sectionIds();
    assertEquals("section-long-input", ids.get(ids.indexOf("section-warnings") + 1), ids.toString());
    assertTrue(html.contains("<a href=\"#section-long-input\">Long input</a>"), "listed in the contents");
    assertTrue(html.indexOf("id=\"section-long-input\"") < html.indexOf("id=\"section-scree\""));
    // the pivot in words and in counts: 4 x 6 x 2 x 3 + 4 + 1 long rows, 24 rows made, one null value skipped
    assertTrue(s.contains("149 long rows of 4 metrics became 24 rows: one per host and 5-minute bucket of ts, each"
        + " cell the mean of the bucket&#39;s values"), s);
    assertTrue(s.contains("<dt>Long rows read</dt><dd>149</dd>"), s);
    assertTrue(s.contains("<dt>Rows made</dt><dd>24</dd>"), s);
    assertTrue(s.contains("<dt>Skipped: a null value</dt><dd>1</dd>"), s);
    assertFalse(s.contains("Skipped: a null time"), "reasons that skipped nothing are left out");
    assertTrue(s.contains("<dt>Pivot time</dt>"));
    // one bar per metric, the sparse one marked and labelled, the rule at min-presence
    assertTrue(s.contains("<svg id=\"chart-long-presence\" class=\"chart\""));
    assertEquals(4, HtmlReportTest.count(s, "<g class=\"presence-bar"));
    assertEquals(1, HtmlReportTest.count(s, "<g class=\"presence-bar dropped\">"));
    Matcher dropped = Pattern.compile("<g class=\"presence-bar dropped\">(.*?)</g>", Pattern.DOTALL).matcher(s);
    assertTrue(dropped.find());
    assertTrue(dropped.group(1).contains(">disk_errors</text>"), dropped.group(1));
    assertTrue(dropped.group(1).contains("16.7% · dropped"), dropped.group(1));
    assertTrue(dropped.group(1).contains("fill=\"" + Palette.ACCENT + "\""), "a distinct colour");
    assertTrue(s.contains("class=\"target\""), "the min-presence rule");
    assertTrue(s.contains("min-presence 50%"));
    // the renamed metric and its column
    assertTrue(s.contains("<table class=\"renamed-table\">"), s);
    assertTrue(s.contains("<td class=\"name\">mem.used%</td><td class=\"name\">" + mem + "</td>"), s);
    // the header says where the rows came from
    assertTrue(html.contains("long table " + table + " [parquet] (pivoted by the job)"), "input line");
    HtmlReportTest.assertSvgWellFormed(html);
    HtmlReportTest.assertNoNonFinite(html);

    // the same rows as a wide table: no long-input section
    List<Row> wide = new ArrayList<>();
    SplittableRandom r = new SplittableRandom(9);
    for (int i = 0; i < 24; i++) {
      double base = r.nextDouble();
      wide.add(RowFactory.create("edge-" + i % 4, new Timestamp((T0 + 300L * (i / 4)) * 1000), 20 + 50 * base
          + r.nextDouble(), 1 + 3 * base + r.nextDouble(), 40 + 10 * r.nextDouble()));
    }
    Path wideTable = dir.resolve("wide");
    spark.createDataFrame(wide, WIDE).write().parquet(wideTable.toString());
    RunResult plain = JobRunner.run(spark, JobFiles.settings("input.path = \"" + wideTable + "\"\n"
        + "features.keys = [host, ts]\nreduce.components = 1\noutput.path = \"" + dir.resolve("wide-out") + "\""));
    String page = HtmlReport.render(plain);
    assertFalse(page.contains("section-long-input"), "no long-input section for a wide table");
    assertFalse(page.contains("pivoted by the job"));
  }

  @Test
  void manyMetricsDrawTheSixtyLeastPresentAndSaySo() {
    FleetFixture fleet = new FleetFixture();
    RunResult fit = fleet.fitOnly();
    List<String> metrics = new ArrayList<>(List.of(FleetFixture.FEATURES));
    List<String> columns = new ArrayList<>(metrics.stream().map(LongTable::columnName).toList());
    int extra = 62;
    for (int i = 0; i < extra; i++) {
      metrics.add("probe." + i);
      columns.add(LongTable.columnName("probe." + i));
    }
    long rows = 1000;
    long[] present = new long[metrics.size()];
    for (int j = 0; j < present.length; j++) {
      present[j] = j < FleetFixture.FEATURES.length ? rows : 5 * (j - FleetFixture.FEATURES.length);
    }
    JobSettings.LongLayout layout = new JobSettings.LongLayout(List.of("host"), "ts", "metric", "value",
        300_000_000L, Choices.Aggregate.LAST, 1000, 0.5);
    LongTable.PivotCounts counts = new LongTable.PivotCounts(rows, present, 80_000, 0, 12, 0, 0, 3, 1.5);
    LongTable.View view = new LongTable.View(layout, "/data/fleet-long", null, metrics, columns, List.of("host", "ts"),
        List.of(), "ts", true, null, counts);
    RunResult run = new RunResult(fit.plan().withLongInput(view), fit.fit(), fit.model(), null, null, null, null,
        null, fit.outputPath(), fit.timings(), fit.warnings(), fit.totalSeconds());
    LongInputModel m = ReportModel.of(run).longInput();
    assertEquals(80, m.metricsTotal());
    assertEquals(LongInputModel.BARS, m.bars().size());
    assertEquals("probe.0", m.bars().get(0).metric(), "least present first");
    String s = section(HtmlReport.render(run));
    assertEquals(60, HtmlReportTest.count(s, "<g class=\"presence-bar"));
    // every metric not among the fit's features is dropped; the 60 drawn are all probes
    assertEquals(60, HtmlReportTest.count(s, "<g class=\"presence-bar dropped\">"));
    assertTrue(s.contains("The 60 least present of 80 metrics are drawn"), s);
    assertTrue(s.contains("the 60 least present shown"));
    assertTrue(s.contains("each cell the latest of the bucket&#39;s values"), s);
    assertTrue(s.contains("<dt>Skipped: a metric not selected</dt><dd>12</dd>"));
    assertTrue(s.contains("<dt>Skipped: a null time</dt><dd>3</dd>"));
    // the fleet fixture's inlet_temp_°C and the 62 probes are renamed: the first 60 listed
    assertEquals(60, m.renamed().size());
    assertEquals(63, m.renamedTotal());
    assertTrue(s.contains("The first 60 of 63 renamed metrics are listed"), s);
  }
}
