package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.pca.FitResult;
import io.eigenmill.pca.SnapshotUse;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import io.eigenmill.testing.FleetFixture;
import java.time.LocalDate;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/**
 * The "Snapshots" section: a fit that wrote snapshots and fits merged from 3 and 60 of them (the fleet fixture's
 * records with a {@link SnapshotUse} attached; the counts shown are the records' own), and no section without a
 * store. A real fit from snapshots renders it too ({@code SnapshotFitTest}).
 */
class SnapshotSectionTest {
  private static final FleetFixture FLEET = new FleetFixture();
  private static final String STORE = "/data/edge-fleet/snapshots";

  /** Keys from 2026-11-01 on, key i with 1000 + 10 i rows read of which i % 4 were dropped. */
  static List<SnapshotUse.KeyRows> days(int n) {
    List<SnapshotUse.KeyRows> keys = new ArrayList<>();
    for (int i = 0; i < n; i++) {
      String day = LocalDate.parse("2026-11-01").plusDays(i).toString();
      keys.add(new SnapshotUse.KeyRows(List.of(day), "date=" + day, 1000 + 10 * i, 1000 + 10 * i - i % 4));
    }
    return keys;
  }

  static RunResult run(String hocon, SnapshotUse use) {
    JobSettings s = new SettingsReader().readString("name = \"edge-cache-fleet\"\noutput.path = \"/data/out\"\n"
        + "prepare.scaling = standardize\n" + hocon, List.of(), "edge-fleet.conf");
    JobPlan plan = FLEET.plan(s, "fit");
    FitResult f = FLEET.fit(plan);
    boolean merged = use != null && !use.written();
    FitResult fit = new FitResult(plan, f.model(), f.spectrum(), f.droppedConstant(), merged ? 0 : f.rowsRead(),
        merged ? 0 : f.rowsDropped(), f.imputedCells(), f.missingCells(), f.columnarRead(), merged ? 0 : 1,
        f.kRule(), f.blas(), f.timings(), f.warnings(), use);
    return new RunResult(plan, fit, f.model(), null, null, null, null, null, "/data/out", FleetFixture.timings(),
        fit.warnings(), 12.0);
  }

  static RunResult merged(int keys) {
    return run("input.snapshots = \"" + STORE + "\"\ninput.where = \"date >= '2026-11-01'\"\n",
        new SnapshotUse(STORE, false, List.of("date"), days(keys), List.of()));
  }

  static String section(String html) {
    Matcher m = Pattern.compile("<section id=\"section-snapshots\".*?</section>", Pattern.DOTALL).matcher(html);
    assertTrue(m.find(), "the page has a snapshots section");
    return m.group();
  }

  @Test
  void aFitFromThreeSnapshotsShowsTheStoreOneBarPerKeyAndEveryKey() {
    RunResult run = merged(3);
    String html = HtmlReport.render(run);
    String s = section(html);
    assertTrue(s.contains("<h2 id=\"section-snapshots-h\">Snapshots</h2>"));
    assertTrue(s.contains(STORE));
    assertTrue(s.contains("merged the snapshots below and read no rows"));
    assertTrue(s.contains("<svg id=\"chart-snapshots\" class=\"chart\""));
    assertEquals(3, HtmlReportTest.count(s, "<g class=\"snapshot-bar\">"));
    for (SnapshotUse.KeyRows k : days(3)) {
      assertTrue(s.contains(">" + k.values().get(0) + "</text>"), "label " + k.values());
      // title: key, rows read and used, as the records hold them
      assertTrue(s.contains(k.display() + ": " + Fmt.count(k.rowsRead()) + " rows read, " + Fmt.count(k.rowsUsed())
          + " used"), k.display());
    }
    // keys 1 and 2 dropped rows: their dropped part is drawn; key 0 dropped none
    assertEquals(2, HtmlReportTest.count(s, "class=\"snapshot-dropped\""));
    assertTrue(html.contains("href=\"#section-snapshots\">Snapshots</a>"), "navigation");
    // the header reads the store, not a table
    HeaderModel h = ReportModel.of(run).header();
    assertEquals("snapshot store " + STORE + " (reading no rows)", h.fact("Input"));
    assertTrue(h.fact("Rows read").startsWith("none"), h.fact("Rows read"));
    assertEquals("date >= '2026-11-01'", h.fact("Snapshots where"));
    HtmlReportTest.assertSvgWellFormed(html);
    HtmlReportTest.assertNoNonFinite(html);
  }

  @Test
  void sixtyKeysKeepOneBarEachAndThinTheirLabels() {
    String s = section(HtmlReport.render(merged(60)));
    assertEquals(60, HtmlReportTest.count(s, "<g class=\"snapshot-bar\">"));
    List<String> labels = new ArrayList<>();
    Matcher m = Pattern.compile("class=\"tick snapshot-key\">([^<]*)</text>").matcher(s);
    while (m.find()) {
      labels.add(m.group(1));
    }
    // 868 units for 60 keys: 14.5 a key; a date label at 11 px is about 70 units wide, 80 with its gap: every 6th
    int step = (int) Math.ceil((Svg.textWidth("2026-11-01", Plot.TICK_FONT) + 10) / (868.0 / 60));
    assertEquals(6, step);
    assertEquals((60 + step - 1) / step, labels.size());
    List<SnapshotUse.KeyRows> keys = days(60);
    for (int i = 0; i < labels.size(); i++) {
      assertEquals(keys.get(i * step).values().get(0), labels.get(i));
    }
    assertTrue(s.contains("One key in 6 is labelled"));
    // no bar is drawn without a slot of its own: bar centres strictly increase
    Matcher x = Pattern.compile("class=\"snapshot-used\"").matcher(s);
    int bars = 0;
    while (x.find()) {
      bars++;
    }
    assertEquals(60, bars);
  }

  @Test
  void aFitThatWroteSnapshotsSaysSoAndReadsItsTable() {
    List<SnapshotUse.KeyRows> keys = days(2);
    RunResult run = run("input.path = \"/data/edge-fleet/metrics\"\noutput.snapshots = \"" + STORE + "\"\n",
        new SnapshotUse(STORE, true, List.of("date"), keys, List.of()));
    String html = HtmlReport.render(run);
    String s = section(html);
    assertTrue(s.contains("wrote one snapshot per value of date"));
    assertEquals(2, HtmlReportTest.count(s, "<g class=\"snapshot-bar\">"));
    assertEquals("/data/edge-fleet/metrics [parquet]", ReportModel.of(run).header().fact("Input"));
  }

  @Test
  void aReportWithoutAStoreHasNoSnapshotSection() {
    for (RunResult run : List.of(FLEET.fitOnly(), FLEET.full(), FLEET.applyWithMonitor(), run("input.path = \"/d\"\n",
        null))) {
      String html = HtmlReport.render(run);
      assertFalse(html.contains("section-snapshots"));
      assertFalse(html.contains("chart-snapshots"));
      assertFalse(ReportModel.of(run).sectionIds().contains("section-snapshots"));
    }
  }
}
