package io.eigenmill.report;

import io.eigenmill.record.RunResult;
import java.util.List;

/**
 * {@code report.html}: one self-contained page per run, with inline CSS and SVG only (no script, no font, no image
 * and no address of anything outside the page). It is a view of the result records through {@link ReportModel};
 * nothing statistical is computed here. Each section has a stable id ({@code section-...}) and each chart a stable
 * {@code <svg id="chart-...">}.
 */
public final class HtmlReport {
  private HtmlReport() {}

  /** The page for {@code run}, as UTF-8 text (write it with a UTF-8 encoder). */
  public static String render(RunResult run) {
    return render(ReportModel.of(run));
  }

  /** The page for an already built model. */
  public static String render(ReportModel m) {
    StringBuilder b = new StringBuilder(64 * 1024);
    b.append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
        .append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
        .append("<meta name=\"generator\" content=\"eigenmill ").append(Html.esc(m.header().productVersion()))
        .append("\">\n<title>").append(Html.esc(m.title())).append("</title>\n<style>\n").append(ReportCss.CSS)
        .append("</style>\n</head>\n<body>\n");
    masthead(b, m);
    b.append("<main>\n");
    header(b, m.header());
    warnings(b, m.warnings());
    Sections.longInput(b, m.longInput());
    Sections.snapshots(b, m.snapshots());
    Sections.scree(b, m.scree());
    Sections.loadings(b, m.loadings());
    Sections.scores(b, m.scores());
    Sections.groups(b, m.groups());
    Sections.monitoring(b, m.monitoring());
    Sections.clusters(b, m.clusters());
    Sections.compression(b, m.compression());
    Sections.dataDrift(b, m.dataDrift());
    Sections.drift(b, m.drift());
    b.append("</main>\n<footer>Made by eigenmill ").append(Html.esc(m.header().productVersion()))
        .append(" from the run's result records; the same numbers are in summary.json.</footer>\n</body>\n</html>\n");
    return b.toString();
  }

  private static void masthead(StringBuilder b, ReportModel m) {
    HeaderModel h = m.header();
    b.append("<header class=\"masthead\">\n<div class=\"brand\">eigenmill report</div>\n<h1>").append(Html.esc(h.job()))
        .append("</h1>\n<div class=\"sub\">").append(Html.esc(h.kind())).append(" run · ")
        .append(Html.esc(h.fact("Input"))).append(" · total time ").append(Html.esc(h.totalTime())).append("</div>\n")
        .append("<nav class=\"toc\" aria-label=\"Sections\">");
    for (String id : m.sectionIds()) {
      b.append("<a href=\"#").append(id).append('"').append(id.equals("section-warnings") ? " class=\"warn\"" : "")
          .append('>').append(Html.esc(navTitle(id, m))).append("</a>");
    }
    b.append("</nav>\n</header>\n");
  }

  private static String navTitle(String id, ReportModel m) {
    return switch (id) {
      case "section-header" -> "Run";
      case "section-warnings" -> "Warnings (" + m.warnings().size() + ")";
      case "section-long-input" -> "Long input";
      case "section-snapshots" -> "Snapshots";
      case "section-scree" -> "Variance";
      case "section-loadings" -> "Loadings";
      case "section-scores" -> "Score map";
      case "section-groups" -> "Groups";
      case "section-monitoring" -> "Monitoring";
      case "section-clusters" -> "Clusters";
      case "section-compression" -> "Compression";
      case "section-data-drift" -> "New data";
      default -> "Other model";
    };
  }

  private static void header(StringBuilder b, HeaderModel h) {
    open(b, "section-header", "The run", "What was read, what was kept, how the model was computed and how long "
        + "each stage took.");
    b.append("<div class=\"figures\">");
    for (Fact f : h.keyFigures()) {
      b.append("<div class=\"figure-card\"><span class=\"v\">").append(Html.esc(f.value()))
          .append("</span><span class=\"l\">").append(Html.esc(f.label())).append("</span></div>");
    }
    b.append("</div>\n<div class=\"groups\">\n");
    for (HeaderModel.Group g : h.groups()) {
      b.append("<div><h3>").append(Html.esc(g.title())).append("</h3>\n");
      facts(b, g.facts());
      if (g.title().equals("Rows") && !h.missingByFeature().isEmpty()) {
        b.append("<h3>Missing cells per feature</h3>\n");
        table(b, "missing-table", List.of("feature", "cells"), 1, h.missingByFeature().stream()
            .map(f -> List.of(f.label(), f.value())).toList());
      }
      b.append("</div>\n");
    }
    b.append("</div>\n");
    if (!h.timings().isEmpty()) {
      b.append("<h3>Time per stage</h3>\n");
      timings(b, h);
    }
    close(b);
  }

  private static void timings(StringBuilder b, HeaderModel h) {
    double max = 0;
    for (HeaderModel.Timing t : h.timings()) {
      max = Math.max(max, t.seconds());
    }
    b.append("<table class=\"timings\"><thead><tr><th>stage</th><th class=\"num\">time</th><th></th></tr></thead>")
        .append("<tbody>");
    for (HeaderModel.Timing t : h.timings()) {
      double share = max > 0 ? Math.max(0, t.seconds()) / max : 0;
      b.append("<tr><td>").append(Html.esc(t.stage())).append("</td><td class=\"num\">").append(Html.esc(t.text()))
          .append("</td><td><span class=\"dbar\" style=\"width:").append(Fmt.fixed(share * 240, 1))
          .append("px;background:").append(Palette.KEPT).append("\"></span></td></tr>");
    }
    b.append("<tr><td><b>total</b></td><td class=\"num\"><b>").append(Html.esc(h.totalTime()))
        .append("</b></td><td></td></tr></tbody></table>\n");
  }

  private static void warnings(StringBuilder b, List<String> warnings) {
    if (warnings.isEmpty()) {
      return;
    }
    open(b, "section-warnings", "Warnings (" + warnings.size() + ")", "Each warning says what happened and what to "
        + "do about it.");
    b.append("<ul class=\"warnings\">\n");
    for (String w : warnings) {
      b.append("<li><b>!</b>").append(Html.esc(w)).append("</li>\n");
    }
    b.append("</ul>\n");
    close(b);
  }

  static void open(StringBuilder b, String id, String title, String lead) {
    b.append("<section id=\"").append(id).append("\" aria-labelledby=\"").append(id).append("-h\">\n<h2 id=\"")
        .append(id).append("-h\">").append(Html.esc(title)).append("</h2>\n");
    if (lead != null) {
      b.append("<p class=\"lead\">").append(Html.esc(lead)).append("</p>\n");
    }
  }

  static void close(StringBuilder b) {
    b.append("</section>\n");
  }

  static void facts(StringBuilder b, List<Fact> facts) {
    b.append("<dl class=\"facts\">");
    for (Fact f : facts) {
      b.append("<dt>").append(Html.esc(f.label())).append("</dt><dd>").append(Html.esc(f.value())).append("</dd>");
    }
    b.append("</dl>\n");
  }

  /** A table whose columns from {@code firstNumeric} on are right-aligned numbers; every cell is escaped. */
  static void table(StringBuilder b, String cls, List<String> headers, int firstNumeric, List<List<String>> rows) {
    b.append("<div class=\"tablewrap\"><table class=\"").append(cls).append("\"><thead><tr>");
    for (int c = 0; c < headers.size(); c++) {
      b.append(c >= firstNumeric ? "<th class=\"num\">" : "<th>").append(Html.esc(headers.get(c))).append("</th>");
    }
    b.append("</tr></thead><tbody>");
    for (List<String> row : rows) {
      b.append("<tr>");
      for (int c = 0; c < row.size(); c++) {
        b.append(c >= firstNumeric ? "<td class=\"num\">" : "<td class=\"name\">").append(Html.esc(row.get(c)))
            .append("</td>");
      }
      b.append("</tr>");
    }
    b.append("</tbody></table></div>\n");
  }

  static void figure(StringBuilder b, String svg, String caption) {
    b.append("<figure>").append(svg);
    if (caption != null) {
      b.append("<figcaption>").append(Html.esc(caption)).append("</figcaption>");
    }
    b.append("</figure>\n");
  }
}
