package io.eigenmill.report;

import io.eigenmill.Version;
import io.eigenmill.io.PcaModel;
import io.eigenmill.pca.FitResult;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.record.RunResult;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;

/**
 * What the run was: job, input, rows and features used and dropped, method and why, scaling, k and its rule,
 * timings, BLAS and version. Facts are grouped as the page shows them.
 *
 * @param keyFigures the few numbers shown large at the top
 * @param groups titled lists of facts ("Run", "Rows", "Features", "Method")
 * @param missingByFeature missing cells per feature, only features that had any
 * @param timings seconds per stage, in the order the stages ran
 */
public record HeaderModel(
    String job,
    String kind,
    String productVersion,
    List<Fact> keyFigures,
    List<Group> groups,
    List<Fact> missingByFeature,
    List<Timing> timings,
    String totalTime) {

  /** Feature names listed in a fact before "and N more". */
  static final int NAMES = 30;
  /** Features listed in the missing-cells table (those with the most missing cells). */
  static final int MISSING_ROWS = 30;

  public record Group(String title, List<Fact> facts) {}

  public record Timing(String stage, double seconds, String text) {}

  /** The value of the fact labelled {@code label} in any group, or null. */
  public String fact(String label) {
    for (Group g : groups) {
      String v = Fact.find(g.facts(), label);
      if (v != null) {
        return v;
      }
    }
    return Fact.find(keyFigures, label);
  }

  static HeaderModel of(RunResult run, ScreeModel scree) {
    JobPlan plan = run.plan();
    JobSettings s = plan.settings();
    List<Group> groups = List.of(
        new Group("Run", runFacts(run)),
        new Group("Rows", rowFacts(run)),
        new Group("Features", featureFacts(run)),
        new Group("Method", methodFacts(run)));
    List<Timing> timings = new ArrayList<>();
    if (run.timings() != null) {
      for (Map.Entry<String, Double> e : run.timings().entrySet()) {
        timings.add(new Timing(e.getKey(), e.getValue(), Fmt.seconds(e.getValue())));
      }
    }
    return new HeaderModel(s.name(), plan.kind(), Version.current(), keyFigures(run, scree), groups,
        missing(run.fit()), timings, Fmt.seconds(run.totalSeconds()));
  }

  private static List<Fact> keyFigures(RunResult run, ScreeModel scree) {
    List<Fact> f = new ArrayList<>();
    PcaModel model = run.model();
    if (run.fit() != null) {
      f.add(new Fact("rows used", Fmt.count(run.fit().rowsUsed())));
    } else if (run.monitor() != null) {
      f.add(new Fact("rows scored", Fmt.count(run.monitor().rowsScored())));
    }
    if (model != null) {
      f.add(new Fact("features", Fmt.count(model.d())));
      f.add(new Fact("components kept", Fmt.count(model.k())));
    }
    if (scree != null && scree.k() > 0 && scree.k() <= scree.components().size()) {
      f.add(new Fact("variance explained", scree.components().get(scree.k() - 1).cumulativeText()));
    }
    if (run.monitor() != null) {
      f.add(new Fact("flagged by T2", Fmt.count(run.monitor().flaggedT2())));
      f.add(new Fact("flagged by Q", Fmt.count(run.monitor().flaggedQ())));
    }
    if (run.clusters() != null) {
      f.add(new Fact("clusters", Fmt.count(run.clusters().k())));
    }
    return f;
  }

  private static List<Fact> runFacts(RunResult run) {
    JobPlan plan = run.plan();
    JobSettings s = plan.settings();
    List<Fact> f = new ArrayList<>();
    f.add(new Fact("Job", s.name()));
    f.add(new Fact("Kind", plan.kind().equals("apply") ? "apply (scores new rows with an existing model)"
        : plan.kind().equals("fit") ? "fit (fits a new model)" : plan.kind()));
    f.add(new Fact("Job file", s.sourceFile()));
    boolean fromSnapshots = run.fit() != null && run.fit().fromSnapshots();
    if (fromSnapshots) {
      f.add(new Fact("Input", "snapshot store " + s.input().snapshots() + " (reading no rows)"));
    } else if (plan.longInput() != null) {
      f.add(new Fact("Input", "long table " + s.input().path() + " [" + s.input().format().word()
          + "] (pivoted by the job)"));
    } else {
      String asOf = s.input().asOf().isBlank() ? "" : " as of " + s.input().asOf().strip();
      f.add(new Fact("Input", s.input().fromTable() ? "table " + s.input().source() + asOf
          : s.input().path() + " [" + s.input().format().word() + "]"));
    }
    if (!fromSnapshots && !plan.partitionColumns().isEmpty()) {
      f.add(new Fact("Partitioned by", String.join(", ", plan.partitionColumns())));
    }
    if (s.input().filtered()) {
      f.add(new Fact(fromSnapshots ? "Snapshots where" : "Rows where", s.input().where()));
    }
    if (s.apply().appliesModel()) {
      f.add(new Fact("Model applied", s.apply().model()));
    }
    if (run.outputPath() != null) {
      f.add(new Fact("Output", run.outputPath()));
    }
    f.add(new Fact("Product version", Version.current()));
    f.add(new Fact("Spark / Scala", Version.spark() + " / " + Version.scala()));
    if (run.model() != null && !run.model().productVersion().equals(Version.current())) {
      f.add(new Fact("Model written by version", run.model().productVersion()));
    }
    f.add(new Fact("BLAS / LAPACK", run.fit() != null ? run.fit().blas() : "not recorded for this run"));
    f.add(new Fact("Total time", Fmt.seconds(run.totalSeconds())));
    return f;
  }

  private static List<Fact> rowFacts(RunResult run) {
    FitResult fit = run.fit();
    List<Fact> f = new ArrayList<>();
    String policy = run.plan().settings().prepare().missing().word();
    if (fit != null && fit.fromSnapshots()) {
      long read = 0;
      for (var k : fit.snapshots().keys()) {
        read += k.rowsRead();
      }
      f.add(new Fact("Rows read", "none: the fit merged " + Fmt.count(fit.snapshots().keys().size())
          + (fit.snapshots().keys().size() == 1 ? " snapshot" : " snapshots")));
      f.add(new Fact("Rows in the snapshots", Fmt.count(read) + " read when they were written"));
      f.add(new Fact("Rows used", Fmt.count(fit.rowsUsed())));
      f.add(new Fact("Rows dropped", Fmt.count(read - fit.snapshots().rowsUsed()) + " when the snapshots were"
          + " written (rows with a missing value; prepare.missing = " + policy + ")"));
    } else if (fit != null) {
      f.add(new Fact("Rows read", Fmt.count(fit.rowsRead())));
      f.add(new Fact("Rows used", Fmt.count(fit.rowsUsed())));
      f.add(new Fact("Rows dropped", Fmt.count(fit.rowsDropped())
          + (fit.rowsDropped() > 0 ? " (rows with a missing value; prepare.missing = " + policy + ")" : "")));
      f.add(new Fact("Missing values", "prepare.missing = " + policy + " (null, NaN and infinities count as missing)"));
      if (fit.imputedCells() > 0) {
        f.add(new Fact("Cells imputed with the column mean", Fmt.count(fit.imputedCells())));
      }
    } else if (run.model() != null) {
      f.add(new Fact("Rows the model was fitted on", Fmt.count(run.model().rows())));
    }
    if (run.monitor() != null) {
      f.add(new Fact("Rows scored", Fmt.count(run.monitor().rowsScored())));
    }
    if (run.reconstruction() != null) {
      f.add(new Fact("Rows reconstructed", Fmt.count(run.reconstruction().rows())));
    }
    return f;
  }

  private static List<Fact> featureFacts(RunResult run) {
    JobPlan plan = run.plan();
    List<Fact> f = new ArrayList<>();
    if (run.model() != null) {
      f.add(new Fact("Features used", Fmt.count(run.model().d()) + ": " + names(run.model().features())));
    }
    if (run.fit() != null) {
      List<String> constant = run.fit().droppedConstant();
      f.add(new Fact("Dropped as constant", constant.isEmpty() ? "none" : Fmt.count(constant.size()) + ": "
          + names(constant)));
    }
    f.add(new Fact("Keys", plan.keys().isEmpty() ? "none" : String.join(", ", plan.keys())));
    for (String note : plan.notes()) {
      f.add(new Fact("Plan note", note));
    }
    return f;
  }

  /** The first {@link #NAMES} names, then how many more there are. */
  static String names(List<String> names) {
    if (names.size() <= NAMES) {
      return String.join(", ", names);
    }
    return String.join(", ", names.subList(0, NAMES)) + " and " + Fmt.count(names.size() - NAMES) + " more";
  }

  private static List<Fact> methodFacts(RunResult run) {
    JobPlan plan = run.plan();
    PcaModel model = run.model();
    List<Fact> f = new ArrayList<>();
    if (model != null) {
      f.add(new Fact("Method", model.method().word()));
    }
    f.add(new Fact("Why this method", plan.methodReason()));
    if (model != null) {
      f.add(new Fact("Scaling", model.scaling().equals("standardize")
          ? "standardize (centred, divided by each feature's standard deviation)"
          : model.scaling().equals("none") ? "none (centred only, original units)" : model.scaling()));
      f.add(new Fact("Components kept", Fmt.count(model.k())));
    }
    f.add(new Fact("Rule for k", run.fit() != null ? run.fit().kRule() : "k of the applied model"));
    if (run.fit() != null && run.fit().fromSnapshots()) {
      f.add(new Fact("Read path", "none: moments merged from the snapshot store"));
    } else if (run.fit() != null) {
      f.add(new Fact("Read path", (run.fit().columnarRead() ? "columnar" : "rows") + ", "
          + Fmt.count(run.fit().passes()) + (run.fit().passes() == 1 ? " pass" : " passes") + " over the data"));
    }
    if (plan.memory() != null) {
      f.add(new Fact("Memory", plan.memory().describe()));
    }
    return f;
  }

  private static List<Fact> missing(FitResult fit) {
    List<Fact> f = new ArrayList<>();
    if (fit == null || fit.missingCells() == null) {
      return f;
    }
    List<String> names = fit.plan().features();
    List<Integer> order = new ArrayList<>();
    for (int j = 0; j < fit.missingCells().length && j < names.size(); j++) {
      if (fit.missingCells()[j] > 0) {
        order.add(j);
      }
    }
    if (order.size() > MISSING_ROWS) {
      order.sort((a, b) -> Long.compare(fit.missingCells()[b], fit.missingCells()[a]));
      int hidden = order.size() - MISSING_ROWS;
      order = new ArrayList<>(order.subList(0, MISSING_ROWS));
      order.sort(Integer::compare);
      for (int j : order) {
        f.add(new Fact(names.get(j), Fmt.count(fit.missingCells()[j])));
      }
      f.add(new Fact("and " + Fmt.count(hidden) + " more features", ""));
      return f;
    }
    for (int j : order) {
      f.add(new Fact(names.get(j), Fmt.count(fit.missingCells()[j])));
    }
    return f;
  }
}
