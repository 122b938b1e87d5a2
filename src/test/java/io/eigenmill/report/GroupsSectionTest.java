package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.io.GroupModels;
import io.eigenmill.io.PcaModel;
import io.eigenmill.math.Moments;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.pca.FitResult;
import io.eigenmill.pca.GroupFit;
import io.eigenmill.pca.Groups;
import io.eigenmill.pca.ModelSolver;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.Choices;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.FleetFixture;
import java.util.ArrayList;
import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/**
 * The "Groups" section, without Spark: the fleet fixture's rows split by its three host groups, each solved by the
 * fit's own {@link ModelSolver} (the grouped fit runs the same solver per group), plus a group whose model is the
 * pooled model itself (its angle to the pooled subspace must be 0), a group with a constant column (dropped by the
 * solver: the angle is taken over the features it kept) and a group below the row threshold. A real grouped job
 * renders it too (GroupedFitTest writes report.html).
 */
class GroupsSectionTest {
  private static final FleetFixture FLEET = new FleetFixture();
  private static final String[] NAMES = {"busy", "storage", "hot-aisle"};

  static ModelSolver.Solved solve(JobSettings s, int group, boolean constantFan) {
    List<double[]> rows = new ArrayList<>();
    for (int i = 0; i < FleetFixture.N; i++) {
      if (FLEET.group[i] == group) {
        double[] r = FLEET.x[i].clone();
        if (constantFan) {
          r[16] = 9500;
        }
        rows.add(r);
      }
    }
    int d = FLEET.d;
    double[] block = new double[rows.size() * d];
    for (int i = 0; i < rows.size(); i++) {
      for (int j = 0; j < d; j++) {
        block[i + j * rows.size()] = rows.get(i)[j];
      }
    }
    Moments m = Moments.empty(d, true);
    m.addBlock(block, rows.size(), rows.size());
    return ModelSolver.of(List.of(FleetFixture.FEATURES), FLEET.model.featureTypes(), Choices.Scaling.STANDARDIZE,
        Choices.Method.COVARIANCE, s.reduce()).solve(m, null);
  }

  /** A fit with {@code extra} more groups (copies of the three fleet groups under other names) after the six. */
  static RunResult grouped(int extra, MonitorResult monitor) {
    JobSettings s = FleetFixture.settings("reduce.group-by = [site]\nreduce.min-group-rows = 190\n");
    JobPlan plan = FLEET.plan(s, "fit");
    FitResult f = FLEET.fit(plan);
    List<GroupFit> groups = new ArrayList<>();
    long[] none = new long[plan.d()];
    ModelSolver.Solved[] solved = new ModelSolver.Solved[3];
    for (int g = 0; g < 3; g++) {
      solved[g] = solve(s, g, false);
      groups.add(new GroupFit(KeyValues.of(NAMES[g]), 300 - g, solved[g].model().rows(), none, solved[g], null));
    }
    groups.add(new GroupFit(KeyValues.of("same-as-pooled"), 280, 270, none, new ModelSolver.Solved(FLEET.model,
        FLEET.spectrum, List.of(), f.kRule(), List.of()), null));
    ModelSolver.Solved constant = solve(s, 0, true);
    groups.add(new GroupFit(KeyValues.of("fan-fixed"), 260, constant.model().rows(), none, constant, null));
    groups.add(new GroupFit(KeyValues.of("lab"), 40, 38, none, null,
        "38 usable rows (40 read), fewer than reduce.min-group-rows = 190"));
    for (int i = 0; i < extra; i++) {
      groups.add(new GroupFit(KeyValues.of("site-" + (100 + i)), 200 - i, 200 - i, none, solved[i % 3], null));
    }
    Groups gs = new Groups(new KeyColumns(List.of("site"), List.of("string"), "UTC"), 190, true, groups);
    FitResult fit = new FitResult(plan, f.model(), f.spectrum(), f.droppedConstant(), f.rowsRead(), f.rowsDropped(),
        f.imputedCells(), f.missingCells(), f.columnarRead(), f.passes(), f.kRule(), f.blas(), f.timings(),
        f.warnings(), null, gs);
    return new RunResult(plan, fit, f.model(), monitor, null, null, null, null, "/data/out", FleetFixture.timings(),
        fit.warnings(), 12.0);
  }

  /** The fixture's monitor as a grouped scoring writes it: limits 1, rules per group, rows of unknown groups. */
  static MonitorResult perGroup(MonitorResult m, long unknownRows, List<String> unknownGroups) {
    String rule = "per group: each row against its own group's model's limit at 0.99 (fitted rows: beta limit);"
        + " series drawn as the ratio to it";
    return new MonitorResult(m.confidence(), m.k(), m.rowsScored(), m.flaggedT2(), m.flaggedQ(), m.flaggedBoth(), 1.0,
        rule, 1.0, rule, "per group", Double.NaN, true, m.series(), m.topColumns(), m.top(), m.warnings(),
        unknownRows, unknownGroups);
  }

  static String section(String html) {
    Matcher m = Pattern.compile("<section id=\"section-groups\".*?</section>", Pattern.DOTALL).matcher(html);
    assertTrue(m.find(), "the page has a groups section");
    return m.group();
  }

  static int tableRows(String s) {
    Matcher m = Pattern.compile("<table class=\"groups-table\">.*?<tbody>(.*?)</tbody>", Pattern.DOTALL).matcher(s);
    assertTrue(m.find());
    return HtmlReportTest.count(m.group(1), "<tr");
  }

  @Test
  void sixGroupsShowTheirTableScreesAnglesAndTheSkippedReason() {
    RunResult run = grouped(0, null);
    String html = HtmlReport.render(run);
    String s = section(html);
    assertTrue(s.contains("<h2 id=\"section-groups-h\">Groups</h2>"));
    assertTrue(s.contains("grouped by site: 6 groups, 5 with a model of its own"), s);
    assertTrue(s.contains("solved on the driver"));
    assertTrue(s.contains("190 usable rows"));
    assertEquals(6, tableRows(s));
    // the skipped group: its reason, muted, and no model
    assertTrue(s.contains("<tr class=\"skipped\"><td class=\"key\">lab</td>"));
    assertTrue(s.contains("no model: 38 usable rows (40 read), fewer than reduce.min-group-rows = 190"));
    assertFalse(s.contains("more are in summary.json"));
    // one small scree per group with a model, each with the pooled curve
    assertEquals(5, HtmlReportTest.count(s, "<svg id=\"chart-group-scree-"));
    assertEquals(5, HtmlReportTest.count(s, "class=\"pooled-curve\""));
    // one bar per group with a model
    assertEquals(5, HtmlReportTest.count(s, "<g class=\"angle-bar\">"));
    GroupsModel m = ReportModel.of(run).groups();
    Map<String, Double> angles = new LinkedHashMap<>();
    for (GroupsModel.Angle a : m.angles()) {
      angles.put(a.label(), a.degrees());
    }
    // the pooled model against itself: every principal angle is 0 up to rounding (asin of sines of order
    // sqrt(d) eps after QR: far below 1e-6 degrees)
    assertEquals(0.0, angles.get("same-as-pooled"), 1e-6);
    // the three host groups are shifted along different latent factors: their own correlation structures differ
    // from the pooled one by clearly more than rounding
    for (String g : NAMES) {
      assertTrue(angles.get(g) > 1 && angles.get(g) <= 90, g + ": " + angles.get(g));
    }
    // the group that kept 17 of 18 features is compared on them: a finite angle
    assertTrue(Double.isFinite(angles.get("fan-fixed")), "fan-fixed: " + angles.get("fan-fixed"));
    assertEquals("same-as-pooled", m.angles().get(m.angles().size() - 1).label(), "sorted, largest first");
    assertTrue(s.contains("differs most from the pooled one: " + m.angles().get(0).label()), m.reading());
    assertTrue(html.contains("href=\"#section-groups\">Groups</a>"), "navigation");
    HtmlReportTest.assertSvgWellFormed(html);
    HtmlReportTest.assertNoNonFinite(html);
  }

  @Test
  void sixtyGroupsAreCappedAtFiftyRowsTwelveScreesAndFiftyBars() {
    String s = section(HtmlReport.render(grouped(60, null)));
    assertEquals(GroupsModel.TABLE_ROWS, tableRows(s));
    assertTrue(s.contains("The 50 largest groups are listed; 16 more are in summary.json."), s);
    assertEquals(GroupsModel.SCREES, HtmlReportTest.count(s, "<svg id=\"chart-group-scree-"));
    assertEquals(GroupsModel.BARS, HtmlReportTest.count(s, "<g class=\"angle-bar\">"));
    assertTrue(s.contains("65 groups, the 50 largest shown"));
  }

  @Test
  void aGroupedRunsMonitoringSaysItsLimitsArePerGroup() {
    RunResult run = grouped(0, perGroup(FLEET.monitor(), 38, List.of("site=lab")));
    String html = HtmlReport.render(run);
    Matcher mon = Pattern.compile("<section id=\"section-monitoring\".*?</section>", Pattern.DOTALL).matcher(html);
    assertTrue(mon.find());
    String s = mon.group();
    assertFalse(s.contains("<dt>T2 limit</dt><dd>1 —"), "no bare limit 1");
    assertTrue(s.contains("each row against its own group&#39;s limits"), s);
    assertTrue(s.contains("each row&#39;s group limit"), "the chart's limit line");
    assertTrue(s.contains("T2 / group limit"));
    String g = section(html);
    assertTrue(g.contains("<dt>Rows of groups without a model</dt><dd>38: kept with null scores and flagged"), g);
    assertTrue(g.contains("<dd>site=lab</dd>"));
  }

  @Test
  void anApplyOfAGroupedModelListsItsGroupsAndTheUnknownRows() {
    RunResult fitted = grouped(0, null);
    Map<KeyValues, PcaModel> models = new LinkedHashMap<>(fitted.fit().groups().models());
    JobSettings s = FleetFixture.settings("apply.model = \"/data/edge-fleet/pca/2026-03/model\"\n");
    JobPlan plan = FLEET.plan(s, "apply");
    RunResult run = new RunResult(plan, null, FLEET.model, perGroup(FLEET.monitor(), 1234, List.of("site=lab",
        "site=new-dc")), null, null, null, null, "/data/out", FleetFixture.timings(), List.of(), 3.0, null, null,
        new GroupModels(List.of("site"), List.of("string"), models));
    String html = HtmlReport.render(run);
    String g = section(html);
    assertEquals(5, tableRows(g));
    assertTrue(g.contains("<th class=\"num\">rows at fit</th>"));
    assertTrue(g.contains("<dt>Rows of groups without a model</dt><dd>1,234"), g);
    assertTrue(g.contains("site=lab; site=new-dc"));
    assertFalse(g.contains("chart-group-angles"), "no pooled model in an apply job");
    HtmlReportTest.assertSvgWellFormed(html);
  }

  @Test
  void aReportWithoutGroupsHasNoGroupsSection() {
    for (RunResult run : List.of(FLEET.fitOnly(), FLEET.full(), FLEET.applyWithMonitor())) {
      String html = HtmlReport.render(run);
      assertFalse(html.contains("section-groups"));
      assertFalse(html.contains("chart-group-"));
      assertFalse(ReportModel.of(run).sectionIds().contains("section-groups"));
      assertFalse(html.contains("group limit"));
    }
    assertTrue(Collections.disjoint(List.of("section-groups"), ReportModel.of(FLEET.full()).sectionIds()));
  }
}
