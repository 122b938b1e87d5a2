package io.eigenmill.report;

import java.util.ArrayList;
import java.util.List;

/** The HTML of each analysis section, from its model; a null model writes nothing. */
final class Sections {
  private Sections() {}

  static void longInput(StringBuilder b, LongInputModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-long-input", "Long input", m.intro());
    HtmlReport.facts(b, m.facts());
    HtmlReport.figure(b, LongInputCharts.presence(m), "One bar per metric: the share of the pivoted rows where it "
        + "has a value, least present first." + (m.dropsSparse() ? " The dashed line is input.long.min-presence; "
            + "metrics below it were left out of the fit (in orange, labelled dropped)." : " An apply job keeps "
            + "the model's metrics however sparse; their gaps follow prepare.missing.")
        + (m.bars().size() < m.metricsTotal() ? " The " + m.bars().size() + " least present of "
            + Fmt.count(m.metricsTotal()) + " metrics are drawn; metric-columns.csv lists every metric with its "
            + "presence." : ""));
    if (!m.renamed().isEmpty()) {
      b.append("<h3>Renamed metrics</h3>\n<p class=\"note\">These metric names are not column names as they "
          + "stand; each became the column beside it (the same name always gives the same column).</p>\n");
      HtmlReport.table(b, "renamed-table", List.of("metric", "column"), 2, m.renamed());
      if (m.renamed().size() < m.renamedTotal()) {
        b.append("<p class=\"note\">The first ").append(m.renamed().size()).append(" of ")
            .append(Fmt.count(m.renamedTotal())).append(" renamed metrics are listed; metric-columns.csv has all of"
                + " them.</p>\n");
      }
    }
    HtmlReport.close(b);
  }

  static void snapshots(StringBuilder b, SnapshotModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-snapshots", "Snapshots", m.written()
        ? "This fit also saved the moments of each key's rows to a snapshot store; later fits can merge them "
            + "(input.snapshots) without reading the rows again."
        : "This model was fitted from saved moments: the snapshots below were merged in key order, as a fit over "
            + "their rows would have summed them.");
    HtmlReport.facts(b, m.facts());
    HtmlReport.figure(b, SnapshotCharts.strip(m), "One bar per snapshot: its rows used; in orange on top, its "
        + "rows dropped for missing values" + (m.written() ? "." : " when it was written.")
        + (SnapshotCharts.labelStep(m) > 1 ? " One key in " + SnapshotCharts.labelStep(m) + " is labelled; each"
            + " bar's title names its key." : ""));
    HtmlReport.close(b);
  }

  static void groups(StringBuilder b, GroupsModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-groups", "Groups", null);
    b.append("<p class=\"lead\">").append(Html.esc(m.intro())).append("</p>\n");
    if (!m.unknown().isEmpty()) {
      HtmlReport.facts(b, m.unknown());
    }
    b.append(m.apply() ? "<h3>The applied groups</h3>\n" : "<h3>Each group</h3>\n");
    b.append("<div class=\"tablewrap\"><table class=\"groups-table\"><thead><tr>");
    for (String c : m.columns()) {
      b.append("<th>").append(Html.esc(c)).append("</th>");
    }
    for (String h : m.headers()) {
      b.append("<th class=\"num\">").append(Html.esc(h)).append("</th>");
    }
    b.append("</tr></thead><tbody>");
    int cells = m.headers().size();
    for (GroupsModel.Row r : m.rows()) {
      b.append(r.reason() == null ? "<tr>" : "<tr class=\"skipped\">");
      for (String v : r.keys()) {
        b.append("<td class=\"key\">").append(Html.esc(v)).append("</td>");
      }
      if (r.reason() == null) {
        for (String t : r.texts()) {
          b.append("<td class=\"num\">").append(Html.esc(t)).append("</td>");
        }
      } else {
        // rows read and used, then the reason across the model's columns
        b.append("<td class=\"num\">").append(Html.esc(r.texts().get(0))).append("</td><td class=\"num\">")
            .append(Html.esc(r.texts().get(1))).append("</td><td class=\"reason\" colspan=\"").append(cells - 2)
            .append("\">no model: ").append(Html.esc(r.reason())).append("</td>");
      }
      b.append("</tr>");
    }
    b.append("</tbody></table></div>\n");
    if (m.rows().size() < m.total()) {
      b.append("<p class=\"note\">The ").append(m.rows().size()).append(" largest groups are listed; ")
          .append(Fmt.count(m.total() - m.rows().size())).append(" more are in summary.json.</p>\n");
    }
    if (!m.screes().isEmpty()) {
      b.append("<h3>Variance by component, per group</h3>\n<div class=\"multiples\">");
      double max = GroupCharts.maxShare(m);
      for (int i = 0; i < m.screes().size(); i++) {
        b.append(GroupCharts.scree(m, m.screes().get(i), i, max));
      }
      b.append("</div>\n<p class=\"note\">Each bar is one component's share of the group's variance; dark bars are "
          + "kept. The grey line is the pooled model (k = ").append(m.pooledK()).append("). All charts share one "
          + "axis.").append(m.screes().size() < m.anglesTotal() ? " The " + m.screes().size() + " largest groups "
          + "with a model are drawn." : "").append("</p>\n");
    }
    if (!m.angles().isEmpty()) {
      b.append("<h3>How far each group is from the pooled model</h3>\n");
      b.append("<p class=\"lead\">For each group, the largest principal angle between the components it keeps and "
          + "those the pooled model keeps. A small angle means the group varies along the same directions as the "
          + "fleet as a whole. Angles are measured on the features the group kept, in the pooled model's units.</p>\n");
      HtmlReport.figure(b, GroupCharts.angles(m), m.reading().isEmpty() ? null : m.reading());
    }
    HtmlReport.close(b);
  }

  static void scree(StringBuilder b, ScreeModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-scree", "Variance by component", "Each bar is the variance carried by one "
        + "principal component; the line adds them up. Components left of the dotted line are kept (k = " + m.k()
        + "): " + m.kRule() + ".");
    String caption = (m.logScale() ? "Eigenvalues on a log scale: they span more than "
        + Fmt.num(ScreeModel.LOG_DECADES) + " decades. " : "")
        + (m.complete() ? "" : "The method computed " + m.computed() + " of " + m.features() + " eigenvalues; "
            + "shares are of the total variance, which is known exactly. ")
        + (m.components().size() < m.computed() ? "The first " + m.components().size() + " of " + m.computed()
            + " components are drawn." : "");
    HtmlReport.figure(b, SpectrumCharts.scree(m), caption.isBlank() ? null : caption.trim());
    int rows = Math.min(m.components().size(), Math.max(m.k() + 3, 10));
    b.append("<div class=\"tablewrap\"><table class=\"scree-table\"><thead><tr><th>component</th>")
        .append("<th class=\"num\">eigenvalue</th><th class=\"num\">share of variance</th>")
        .append("<th class=\"num\">cumulative</th><th>kept</th></tr></thead><tbody>");
    for (ScreeModel.Component c : m.components().subList(0, rows)) {
      b.append(c.kept() ? "<tr class=\"kept\">" : "<tr>").append("<td>PC").append(c.number())
          .append("</td><td class=\"num ev-value\">").append(Html.esc(c.eigenvalueText()))
          .append("</td><td class=\"num ev-ratio\">").append(Html.esc(c.ratioText()))
          .append("</td><td class=\"num ev-cumulative\">").append(Html.esc(c.cumulativeText())).append("</td><td>")
          .append(c.kept() ? "yes" : "").append("</td></tr>");
    }
    b.append("</tbody></table></div>\n");
    if (rows < m.components().size()) {
      b.append("<p class=\"note\">The table lists the first ").append(rows)
          .append(" components; summary.json has all of them.</p>\n");
    }
    randomizedAccuracy(b, m.accuracy());
    HtmlReport.close(b);
  }

  /** The randomized fit's residuals per kept component, its bound against the tolerance, and what it cost. */
  private static void randomizedAccuracy(StringBuilder b, ScreeModel.Accuracy a) {
    if (a == null) {
      return;
    }
    b.append("<h3>Accuracy of the randomized method</h3>\n<p class=\"note\">The randomized method checks its own "
        + "result from the last pass over the data. For each kept component v with eigenvalue θ, the residual "
        + "‖Cv − θv‖ is 0 for an exact eigenpair; it is shown over the largest eigenvalue θ₁. The bound "
        + Html.esc(a.bound()) + " (the norm of all kept components' residuals over θ₁) is ")
        .append(a.met() ? "within" : "<b>above</b>").append(" reduce.randomized.tolerance = ")
        .append(Html.esc(a.tolerance())).append(" after ").append(a.iterations()).append(" power iteration")
        .append(a.iterations() == 1 ? "" : "s").append(a.added() > 0 ? " (" + a.added() + " added to reach it)" : "")
        .append(a.met() ? "" : ", the cap reduce.randomized.max-power-iterations = " + a.maxIterations())
        .append(Html.esc(": each kept eigenvalue is within bound × θ₁ of an eigenvalue of the covariance (Kahan's "
            + "theorem), and, when the sketch missed no leading direction, at most that much below the true one. "
            + "The kept components capture " + a.captured() + " of the variance, at most " + a.capturedBound()
            + " percentage points below the best k components could. The angle column estimates how far each "
            + "direction may be from the true one (Davis-Kahan, with the gap to the nearest computed eigenvalue): a "
            + "large angle marks nearly equal eigenvalues, whose directions are ill-determined (their plane is "
            + "not)."))
        .append("</p>\n");
    HtmlReport.table(b, "randomized-accuracy", List.of("component", "eigenvalue", "residual / θ₁",
        "angle estimate (rad)"), 1, a.rows());
  }

  static void loadings(StringBuilder b, LoadingsModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-loadings", "What the components are made of", "A loading is the weight of a "
        + "feature in a component. Orange is positive, blue negative; features that move together sit together, "
        + "grouped by the component on which they weigh most.");
    String hidden = m.featuresHidden() > 0 ? " The " + m.rows().size() + " features with the largest loadings are "
        + "shown; " + m.featuresHidden() + " more are in the model." : "";
    String cols = m.components().size() < m.componentsTotal() ? " The first " + m.components().size() + " of "
        + m.componentsTotal() + " kept components are shown." : "";
    HtmlReport.figure(b, SpectrumCharts.heatmap(m), "Loadings of the kept components; the colour scale runs from -"
        + Fmt.fixed(m.maxAbs(), 2) + " to +" + Fmt.fixed(m.maxAbs(), 2) + "." + hidden + cols);
    double scaleMax = 0;
    List<String> names = new ArrayList<>();
    for (LoadingsModel.TopList t : m.top()) {
      for (LoadingsModel.Bar bar : t.bars()) {
        scaleMax = Math.max(scaleMax, Math.abs(bar.value()));
        names.add(bar.feature());
      }
    }
    // one label column for the side-by-side charts, so that they are drawn at the same scale
    double labelWidth = SpectrumCharts.labelWidth(names);
    b.append("<h3>Largest loadings</h3>\n<div class=\"row\">");
    for (int i = 0; i < m.top().size(); i++) {
      HtmlReport.figure(b, SpectrumCharts.topBars(m.top().get(i), scaleMax > 0 ? scaleMax : 1, labelWidth, i), null);
    }
    b.append("</div>\n");
    HtmlReport.close(b);
  }

  static void scores(StringBuilder b, ScoreMapModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-scores", "Score map", "Each point is a row placed by its component scores; rows "
        + "that are alike lie close together. Axes are scaled independently.");
    if (!m.legend().isEmpty()) {
      b.append("<ul class=\"legend\">");
      for (ScoreMapModel.LegendEntry e : m.legend()) {
        b.append("<li>").append(ScoreCharts.swatch(e.index())).append(Html.esc(e.label())).append("</li>");
      }
      b.append("</ul>\n");
    }
    b.append("<div class=\"row\">");
    for (ScoreMapModel.Plot p : m.plots()) {
      HtmlReport.figure(b, ScoreCharts.scatter(m, p), null);
    }
    b.append("</div>\n<p class=\"note\">").append(Html.esc(m.caption())).append(".</p>\n");
    HtmlReport.close(b);
  }

  static void monitoring(StringBuilder b, MonitoringModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-monitoring", "Monitoring: T2 and Q", "T2 measures how far a row lies from the "
        + "centre inside the model's components; Q measures what the components cannot explain. A row above a "
        + "limit is unusual at the " + m.confidence() + " confidence level; with limits that hold, "
        + Fmt.percent(m.expected(), 1) + " of ordinary rows are above each limit by chance.");
    b.append("<div class=\"figures\">");
    for (Fact f : m.counts()) {
      b.append("<div class=\"figure-card\"><span class=\"v\">").append(Html.esc(f.value()))
          .append("</span><span class=\"l\">").append(Html.esc(f.label())).append("</span></div>");
    }
    b.append("</div>\n");
    HtmlReport.facts(b, m.limits());
    if (m.position().length > 0) {
      HtmlReport.figure(b, MonitorCharts.series(m, "t2"), m.caption());
      HtmlReport.figure(b, MonitorCharts.series(m, "q"), m.caption());
    } else {
      b.append("<p class=\"note\">No series was recorded for plotting.</p>\n");
    }
    if (!m.top().isEmpty()) {
      b.append("<h3>Most unusual rows</h3>\n");
      if (m.perGroup()) {
        b.append("<p class=\"note\">T2 and Q in this table are each row's own values; each group has its own "
            + "limits, so rows are ranked by their values over their group's limits.</p>\n");
      }
      topRows(b, m);
    }
    HtmlReport.close(b);
  }

  private static void topRows(StringBuilder b, MonitoringModel m) {
    b.append("<div class=\"tablewrap\"><table class=\"flagged-table\"><thead><tr>");
    for (String k : m.keyNames()) {
      b.append("<th>").append(Html.esc(k)).append("</th>");
    }
    b.append("<th class=\"num\">T2</th><th class=\"num\">Q</th><th>flagged by</th>")
        .append("<th>largest contributions to Q</th></tr></thead><tbody>");
    for (MonitoringModel.TopRow r : m.top()) {
      b.append("<tr>");
      for (String k : r.keys()) {
        b.append("<td class=\"key\">").append(Html.esc(k)).append("</td>");
      }
      b.append("<td class=\"num\">").append(Html.esc(r.t2())).append("</td><td class=\"num\">")
          .append(Html.esc(r.q())).append("</td><td>").append(Html.esc(r.flaggedBy())).append("</td><td>");
      for (Fact c : r.contributions()) {
        b.append("<span class=\"contrib\">").append(Html.esc(c.label())).append(" <b>").append(Html.esc(c.value()))
            .append("</b></span> ");
      }
      b.append("</td></tr>");
    }
    b.append("</tbody></table></div>\n");
  }

  static void clusters(StringBuilder b, ClusterModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-clusters", "Clusters", "Groups of similar " + m.unit() + " found by k-means; "
        + "each group is described by the features that set it apart, in original units.");
    HtmlReport.facts(b, m.facts());
    if (m.hasCurves()) {
      b.append("<h3>Choosing k</h3>\n<div class=\"row\">");
      HtmlReport.figure(b, ClusterCharts.curve(m, "chart-cluster-silhouette", "Silhouette (higher is better)",
          ClusterModel.Selection::silhouette), null);
      HtmlReport.figure(b, ClusterCharts.curve(m, "chart-cluster-calinski-harabasz",
          "Calinski-Harabasz (higher is better)", ClusterModel.Selection::calinskiHarabasz), null);
      HtmlReport.figure(b, ClusterCharts.curve(m, "chart-cluster-wcss", "Within-cluster sum of squares",
          ClusterModel.Selection::wcss), "Look for a bend: past it, more clusters gain little.");
      b.append("</div>\n");
    }
    b.append("<div class=\"tablewrap\"><table class=\"selection-table\"><thead><tr><th class=\"num\">k</th>")
        .append("<th class=\"num\">within-cluster sum of squares</th><th class=\"num\">silhouette</th>")
        .append("<th class=\"num\">Calinski-Harabasz</th><th class=\"num\">Davies-Bouldin (lower is better)</th>")
        .append("<th class=\"num\">restarts at the best / run</th>")
        .append("<th class=\"num\">restarts' within-cluster SS min / median / max</th>")
        .append("</tr></thead><tbody>");
    for (ClusterModel.Selection s : m.selection()) {
      b.append(s.chosen() ? "<tr class=\"chosen\">" : "<tr>");
      for (String t : s.texts()) {
        b.append("<td class=\"num\">").append(Html.esc(t)).append("</td>");
      }
      b.append("</tr>");
    }
    b.append("</tbody></table></div>\n<h3>Sizes</h3>\n");
    HtmlReport.figure(b, ClusterCharts.sizes(m), null);
    if (!m.profiles().isEmpty()) {
      b.append("<h3>What sets each cluster apart</h3>\n<p class=\"note\">Difference = (cluster mean - overall mean)"
          + " / overall standard deviation.</p>\n<div class=\"cards\">");
      for (ClusterModel.ProfileView p : m.profiles()) {
        profile(b, p);
      }
      b.append("</div>\n");
    }
    HtmlReport.close(b);
  }

  private static void profile(StringBuilder b, ClusterModel.ProfileView p) {
    double max = 0;
    for (ClusterModel.Shift s : p.shifts()) {
      max = Math.max(max, Math.abs(s.standardized()));
    }
    b.append("<div class=\"card profile\"><h4>").append(ScoreCharts.swatch(p.cluster())).append(Html.esc(p.title()))
        .append("</h4><table><thead><tr><th>feature</th><th class=\"num\">cluster mean</th>")
        .append("<th class=\"num\">overall</th><th class=\"num\">difference</th></tr></thead><tbody>");
    for (ClusterModel.Shift s : p.shifts()) {
      double w = max > 0 ? Math.abs(s.standardized()) / max * 36 : 0;
      b.append("<tr><td class=\"name\">").append(Html.esc(s.feature())).append("</td><td class=\"num\">")
          .append(Html.esc(s.clusterMean())).append("</td><td class=\"num\">").append(Html.esc(s.overallMean()))
          .append("</td><td class=\"num\">").append(Html.esc(s.standardizedText()))
          .append(" <span class=\"dbar\" style=\"width:").append(Fmt.fixed(w, 1)).append("px;background:")
          .append(Palette.diverging(s.standardized() >= 0 ? 0.8 : -0.8)).append("\"></span></td></tr>");
    }
    b.append("</tbody></table></div>");
  }

  static void compression(StringBuilder b, CompressionModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-compression", "Compression", "How well " + m.k() + " components reconstruct each "
        + "feature over " + m.rows() + " rows. Errors are in each feature's own units; the share of variance kept "
        + "compares features with each other.");
    HtmlReport.figure(b, ChangeCharts.varianceKept(m), "Least reconstructed features first"
        + (m.features().size() < m.featuresTotal() ? ": the " + m.features().size() + " least reconstructed of "
            + m.featuresTotal() + "." : "."));
    List<List<String>> rows = new ArrayList<>();
    for (CompressionModel.Feature f : m.features()) {
      rows.add(List.of(f.name(), f.varianceKeptText(), f.rmse(), f.maxAbsError()));
    }
    HtmlReport.table(b, "compression-table", List.of("feature", "variance kept", "RMSE", "max abs error"), 1, rows);
    HtmlReport.close(b);
  }

  private static String cell(List<String> texts, int i) {
    return i < texts.size() ? texts.get(i) : "";
  }

  static void dataDrift(StringBuilder b, DataDriftModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-data-drift", "New data against the model", "The rows this run scored compared"
        + " with the rows the model was fitted on: how much of their variance the model's components still hold,"
        + " each component's variance against its eigenvalue, and the features whose mean moved most, in the"
        + " model's standard deviations.");
    HtmlReport.facts(b, m.facts());
    HtmlReport.table(b, "data-drift-components", List.of("component", "eigenvalue", "new variance", "new / eigenvalue",
        "mean score (sd)", "share, fitted", "share, new"), 1, m.components());
    if (!m.shifts().isEmpty()) {
      b.append("<h3>Largest mean shifts</h3>\n");
      HtmlReport.table(b, "data-drift-shifts", List.of("feature", "model mean", "new mean", "shift (model sd)",
          "variance, new / model"), 1, m.shifts());
      if (m.shifts().size() < m.shiftsTotal()) {
        b.append("<p class=\"lead\">The ").append(m.shifts().size()).append(" largest of ").append(m.shiftsTotal())
            .append(" features; all are in data-drift/ and summary.json.</p>\n");
      }
    }
    if (!m.labels().isEmpty()) {
      b.append("<h3>Labels from saved centroids</h3>\n");
      HtmlReport.facts(b, m.labels());
    }
    HtmlReport.close(b);
  }

  static void drift(StringBuilder b, DriftModel m) {
    if (m == null) {
      return;
    }
    HtmlReport.open(b, "section-drift", "The model against another model", "This run's model compared with "
        + m.otherModel() + " (apply.compare-with). Small principal angles mean the components point the same way;"
        + " mean shifts are in standard deviations of the other model.");
    b.append("<div class=\"row\">");
    HtmlReport.figure(b, ChangeCharts.angles(m), null);
    HtmlReport.figure(b, ChangeCharts.explained(m), null);
    b.append("</div>\n");
    int n = Math.max(m.angles().length, Math.max(m.varianceShareOld().length, m.varianceShareNew().length));
    List<List<String>> components = new ArrayList<>();
    for (int i = 0; i < n; i++) {
      components.add(List.of(Integer.toString(i + 1), cell(m.angleTexts(), i), cell(m.varianceShareOldTexts(), i),
          cell(m.varianceShareNewTexts(), i)));
    }
    HtmlReport.table(b, "drift-table", List.of("component", "principal angle", "explained, old model",
        "explained, new model"), 1, components);
    if (!m.shifts().isEmpty()) {
      b.append("<h3>Largest mean shifts</h3>\n");
      HtmlReport.figure(b, ChangeCharts.shifts(m), m.shifts().size() < m.shiftsTotal() ? "The "
          + m.shifts().size() + " largest of " + m.shiftsTotal() + " shared features." : null);
      List<List<String>> rows = new ArrayList<>();
      for (DriftModel.Shift s : m.shifts()) {
        rows.add(List.of(s.feature(), s.oldMean(), s.newMean(), s.shiftText()));
      }
      HtmlReport.table(b, "shift-table", List.of("feature", "old mean", "new mean", "shift (old sd)"), 1, rows);
    }
    HtmlReport.close(b);
  }
}
