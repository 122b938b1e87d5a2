package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.record.RunResult;
import io.eigenmill.testing.FleetFixture;
import java.io.ByteArrayInputStream;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import javax.xml.parsers.DocumentBuilderFactory;
import org.junit.jupiter.api.Test;

/** The rendered page: sections and charts by id, numbers that parse back to the records, escaping, no network. */
class HtmlReportTest {
  private static final FleetFixture FLEET = new FleetFixture();
  static final List<String> ALL_CHARTS = List.of("chart-scree", "chart-loadings-heatmap", "chart-loadings-top-1",
      "chart-loadings-top-2", "chart-loadings-top-3", "chart-scores-pc1-pc2", "chart-scores-pc1-pc3",
      "chart-monitor-t2", "chart-monitor-q", "chart-cluster-silhouette", "chart-cluster-calinski-harabasz",
      "chart-cluster-wcss", "chart-cluster-sizes", "chart-compression", "chart-drift-angles",
      "chart-drift-explained", "chart-drift-shifts");
  static final List<String> ALL_SECTIONS = List.of("section-header", "section-warnings", "section-scree",
      "section-loadings", "section-scores", "section-monitoring", "section-clusters", "section-compression",
      "section-drift");

  @Test
  void fullRunHasEverySectionAndChart() {
    String html = HtmlReport.render(FLEET.full());
    for (String id : ALL_SECTIONS) {
      assertTrue(html.contains("<section id=\"" + id + "\""), id);
    }
    for (String id : ALL_CHARTS) {
      assertTrue(html.contains("<svg id=\"" + id + "\" class=\"chart\""), id);
    }
  }

  @Test
  void pageHasOnlyTheSectionsOfItsRun() {
    assertSections(HtmlReport.render(FLEET.fitOnly()), "section-header", "section-warnings", "section-scree",
        "section-loadings");
    assertSections(HtmlReport.render(FLEET.fitWithMonitor()), "section-header", "section-warnings", "section-scree",
        "section-loadings", "section-scores", "section-monitoring");
    assertSections(HtmlReport.render(FLEET.applyWithMonitor()), "section-header", "section-scree",
        "section-loadings", "section-scores", "section-monitoring");
    assertSections(HtmlReport.render(FLEET.withClusters()), "section-header", "section-warnings", "section-scree",
        "section-loadings", "section-scores", "section-clusters");
    assertSections(HtmlReport.render(FLEET.withReconstruction()), "section-header", "section-warnings",
        "section-scree", "section-loadings", "section-compression");
    assertSections(HtmlReport.render(FLEET.withDrift()), "section-header", "section-scree", "section-loadings",
        "section-drift");
  }

  private static void assertSections(String html, String... expected) {
    List<String> found = new ArrayList<>();
    Matcher m = Pattern.compile("<section id=\"([a-z-]+)\"").matcher(html);
    while (m.find()) {
      found.add(m.group(1));
    }
    assertEquals(List.of(expected), found);
    for (String id : found) {
      assertTrue(html.contains("href=\"#" + id + "\""), "navigation links to " + id);
    }
  }

  @Test
  void explainedVarianceLabelsParseBackToTheSpectrum() {
    RunResult run = FLEET.fitOnly();
    String html = HtmlReport.render(run);
    double[] ratios = run.fit().spectrum().varianceShares();
    double[] cumulative = run.fit().spectrum().cumulativeVarianceShares();
    double[] eigen = run.fit().spectrum().eigenvalues();
    List<String> shown = cells(html, "ev-ratio");
    List<String> shownCumulative = cells(html, "ev-cumulative");
    List<String> shownEigen = cells(html, "ev-value");
    assertEquals(Math.max(FLEET.k + 3, 10), shown.size());
    for (int i = 0; i < shown.size(); i++) {
      assertEquals(ratios[i] * 100, Double.parseDouble(shown.get(i).replace("%", "")), 0.005 + 1e-9, "PC" + (i + 1));
      assertEquals(cumulative[i] * 100, Double.parseDouble(shownCumulative.get(i).replace("%", "")), 0.005 + 1e-9);
      double e = Double.parseDouble(shownEigen.get(i).replace(",", ""));
      assertEquals(eigen[i], e, Math.abs(eigen[i]) * 5e-4, "eigenvalue " + (i + 1));
    }
    String share = Fmt.percent(ratios[0], 2);
    assertTrue(html.contains(">PC1 (" + share + " of variance)<") || html.contains("PC1 · " + share),
        "PC1 labelled with its share " + share);
    String explained = Fmt.percent(cumulative[FLEET.k - 1], 2);
    assertTrue(html.contains("<span class=\"v\">" + explained + "</span><span class=\"l\">variance explained"),
        "key figure shows " + explained);
    assertTrue(html.contains(">k = " + FLEET.k + "<"), "k marked on the scree plot");
    assertTrue(html.contains(">target 90%<"), "variance target drawn");
  }

  private static List<String> cells(String html, String cls) {
    List<String> out = new ArrayList<>();
    Matcher m = Pattern.compile("<td class=\"num " + cls + "\">([^<]*)</td>").matcher(html);
    while (m.find()) {
      out.add(m.group(1));
    }
    return out;
  }

  @Test
  void monitoringNumbersAndLimitsAreShown() {
    RunResult run = FLEET.fitWithMonitor();
    MonitorResult r = run.monitor();
    String html = HtmlReport.render(run);
    assertTrue(html.contains("<span class=\"v\">" + Fmt.count(r.flaggedQ()) + "</span><span class=\"l\">Flagged by Q"));
    assertTrue(html.contains("limit " + Fmt.num(r.qLimit()) + " (99.0%)"), "Q limit line labelled");
    assertTrue(html.contains("<td class=\"key\">" + r.top().get(0).keys().get(0) + "</td>"), "top row keys");
    assertEquals(r.flaggedT2() + r.flaggedQ(), count(html, "class=\"pt-flagged\""), "highlighted points");
  }

  @Test
  void bucketChartsDrawSharesAndTheTableNamesItsColumns() {
    RunResult run = FLEET.applyWithBuckets(20);
    MonitoringModel m = ReportModel.of(run).monitoring();
    String html = HtmlReport.render(run);
    assertTrue(html.contains("expected 1.0% (1 - confidence)"), "the expected share is the reference line");
    assertTrue(html.contains("<figcaption>" + Html.esc(m.caption()) + "</figcaption>"), "the caption says what a "
        + "point is");
    assertFalse(html.contains("a bounded sample"));
    int excess = 0;
    for (int b = 0; b < m.position().length; b++) {
      excess += (m.bucketExcess(true, b) ? 1 : 0) + (m.bucketExcess(false, b) ? 1 : 0);
    }
    assertTrue(excess >= 1, "the bad hour is above chance");
    assertEquals(excess, count(html, "class=\"pt-flagged\""), "buckets above chance, highlighted");
    assertTrue(html.contains("Share of rows above the Q (squared prediction error) limit (" + Fmt.num(m.qLimit())
        + ") · " + excess), "the title counts them");
    assertTrue(html.contains("<th>host</th><th>ts</th><th>day</th><th class=\"num\">T2</th>"), "column names");
    assertFalse(html.contains("key 3"));
    assertTrue(Pattern.compile("<td class=\"key\">2026-03-\\d\\dT\\d\\d:\\d\\d:00Z</td><td class=\"key\">"
        + "2026-03-\\d\\d</td>").matcher(html).find(), "ISO-8601 instants and dates");
    assertSvgWellFormed(html);
    assertNoNonFinite(html);
  }

  @Test
  void everyTextIsEscaped() {
    List<String> names = List.of("<script>alert(1)</script>", "a&b", "\"quoted\" 'single'", "temp>90");
    PcaModel model = FleetFixture.model(names, 2, new double[] {3, 2, 1, 0.5});
    String html = HtmlReport.render(FleetFixture.applyRun(model, List.of("feature <b>a&b</b> looks odd")));
    assertFalse(html.contains("<script"), "no script element");
    assertFalse(html.contains("<b>a&b"), "warning escaped");
    assertFalse(html.contains("a&b"), "ampersand escaped everywhere");
    assertFalse(html.contains(">temp>90"), "greater-than escaped");
    assertFalse(html.contains("\"quoted\""), "double quotes escaped");
    assertTrue(html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
    assertTrue(html.contains("a&amp;b"));
    assertTrue(html.contains("&quot;quoted&quot; &#39;single&#39;"));
    assertTrue(html.contains("feature &lt;b&gt;a&amp;b&lt;/b&gt; looks odd"));
    assertSvgWellFormed(html);
  }

  @Test
  void noAddressOutsideThePage() {
    for (RunResult run : List.of(FLEET.full(), FLEET.applyWithMonitor())) {
      String html = HtmlReport.render(run);
      String lower = html.toLowerCase(Locale.ROOT);
      assertFalse(lower.contains("http://"), "http://");
      assertFalse(lower.contains("https://"), "https://");
      assertFalse(lower.contains("@import"), "@import");
      assertFalse(lower.contains("<script"), "script");
      assertFalse(lower.contains("<link"), "link");
      assertFalse(lower.contains("<img"), "img");
      assertFalse(lower.contains("xmlns"), "namespace declarations are not needed for inline svg");
      assertFalse(Pattern.compile("url\\s*\\(").matcher(lower).find(), "url()");
      assertFalse(Pattern.compile("(src|href)\\s*=\\s*[\"']?\\s*//").matcher(lower).find(), "protocol-relative");
      Matcher href = Pattern.compile("(src|href|action)\\s*=\\s*\"([^\"]*)\"").matcher(lower);
      while (href.find()) {
        assertTrue(href.group(2).startsWith("#"), "only in-page links: " + href.group());
      }
    }
  }

  @Test
  void chartsAreWellFormedAndFinite() {
    String html = HtmlReport.render(FLEET.full());
    assertSvgWellFormed(html);
    assertNoNonFinite(html);
    for (String tag : List.of("section", "table", "figure", "svg", "g", "div", "ul", "main")) {
      assertEquals(count(html, "<" + tag + ">") + count(html, "<" + tag + " "), count(html, "</" + tag + ">"),
          "balanced <" + tag + ">");
    }
    assertTrue(html.startsWith("<!DOCTYPE html>"));
    assertTrue(html.contains("<meta charset=\"utf-8\">"));
  }

  @Test
  void renderingIsRepeatableAndIndependentOfTheLocale() {
    RunResult run = FLEET.full();
    String first = HtmlReport.render(run);
    Locale saved = Locale.getDefault();
    try {
      Locale.setDefault(Locale.GERMANY);
      assertEquals(first, HtmlReport.render(run), "same page under a German default locale");
    } finally {
      Locale.setDefault(saved);
    }
  }

  @Test
  void edgeCasesRenderWithoutFailing() {
    PcaModel one = FleetFixture.model(List.of("a", "b"), 1, new double[] {1, 0});
    RunResult bare = FleetFixture.applyRun(one, List.of());
    MonitorResult empty = new MonitorResult(0.95, 1, 0, 0, 0, 0, 1, "rule", 1, "rule", "box", -0.5, false,
        MonitorResult.Series.ofRows("row", new double[0], new double[0], new double[0]), List.of(), List.of(),
        List.of());
    RunResult run = new RunResult(bare.plan(), null, one, empty, null, null, null,
        new io.eigenmill.monitor.ScoreSample(List.of("host"), List.of(List.of("h")), new double[][] {{0.0}}, null),
        "/o", Map.of(), List.of(), 0);
    String html = HtmlReport.render(run);
    assertTrue(html.contains("id=\"chart-scores-pc1\""));
    assertTrue(html.contains("No series was recorded for plotting."));
    assertFalse(html.contains("id=\"chart-monitor-t2\""));
    assertNoNonFinite(html);
    assertSvgWellFormed(html);
  }

  /** No NaN or infinity as an attribute value or a number shown (the header's prose may name them). */
  static void assertNoNonFinite(String html) {
    Matcher m = Pattern.compile("[\">,]-?(NaN|Infinity)|(NaN|Infinity)[\",<]").matcher(html);
    assertFalse(m.find(), () -> "non-finite value: " + html.substring(Math.max(0, m.start() - 80), m.end() + 20));
  }

  static int count(String s, String needle) {
    int n = 0;
    for (int i = s.indexOf(needle); i >= 0; i = s.indexOf(needle, i + needle.length())) {
      n++;
    }
    return n;
  }

  /** Each inline SVG parses as XML (so its markup and escaping are sound). */
  static void assertSvgWellFormed(String html) {
    Matcher m = Pattern.compile("<svg .*?</svg>", Pattern.DOTALL).matcher(html);
    int n = 0;
    while (m.find()) {
      n++;
      try {
        DocumentBuilderFactory.newInstance().newDocumentBuilder()
            .parse(new ByteArrayInputStream(m.group().getBytes(StandardCharsets.UTF_8)));
      } catch (Exception e) {
        fail("svg " + n + " is not well-formed: " + e.getMessage() + "\n" + m.group().substring(0,
            Math.min(300, m.group().length())));
      }
    }
    assertTrue(n > 0, "the page has charts");
  }
}
