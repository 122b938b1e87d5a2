package io.eigenmill.report;

import io.eigenmill.kmeans.LabelResult;
import io.eigenmill.monitor.DataDriftResult;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * The new data against the model an apply run used: the split of the new rows' variance in and outside the model's
 * subspace against the model's own, each component's variance against its eigenvalue, the features whose mean moved
 * most (in model standard deviations) with their variance ratios, and the labels given with saved centroids.
 *
 * @param facts the subspace figures, formatted
 * @param components one row per component: component, eigenvalue, new variance, ratio, mean score (sd), model share,
 *     new share
 * @param shifts the largest mean shifts by magnitude, largest first: feature, model mean, new mean, shift, variance
 *     ratio
 * @param shiftsTotal features in the record
 * @param labels facts of the labels, empty when the run labelled nothing
 */
public record DataDriftModel(
    List<Fact> facts,
    List<List<String>> components,
    List<List<String>> shifts,
    int shiftsTotal,
    List<Fact> labels) {

  /** Mean shifts listed. */
  static final int SHIFTS = 15;

  static DataDriftModel of(RunResult run) {
    DataDriftResult d = run.dataDrift();
    if (d == null) {
      return null;
    }
    List<Fact> facts = new ArrayList<>();
    facts.add(new Fact("Rows compared", Fmt.count(d.rows()) + " new, " + Fmt.count(d.modelRows()) + " fitted"));
    facts.add(new Fact("Inside the model's subspace", Fmt.percent(d.newInsideShare(), 2) + " of the new variance ("
        + Fmt.percent(d.modelInsideShare(), 2) + " when fitted)"));
    facts.add(new Fact("Outside the subspace", Fmt.percent(d.newOutsideShare(), 2) + " of the new variance ("
        + Fmt.percent(d.modelOutsideShare(), 2) + " when fitted)"));
    facts.add(new Fact("Total variance, new / fitted", Fmt.num(d.totalVarianceRatio(), 3)));
    List<List<String>> components = new ArrayList<>();
    for (DataDriftResult.ComponentDrift c : d.components()) {
      components.add(List.of(Integer.toString(c.component()), Fmt.num(c.eigenvalue()), Fmt.num(c.newVariance()),
          Fmt.num(c.varianceRatio(), 3), ClusterModel.signed(c.scoreMeanSd()), Fmt.percent(c.modelShare(), 2),
          Fmt.percent(c.newShare(), 2)));
    }
    List<DataDriftResult.FeatureDrift> sorted = new ArrayList<>(d.features());
    sorted.sort(Comparator.comparingDouble((DataDriftResult.FeatureDrift f) -> -Math.abs(f.meanShiftSd())));
    List<List<String>> shifts = new ArrayList<>();
    for (DataDriftResult.FeatureDrift f : sorted.subList(0, Math.min(SHIFTS, sorted.size()))) {
      shifts.add(List.of(f.feature(), Fmt.num(f.modelMean()), Fmt.num(f.newMean()), ClusterModel.signed(
          f.meanShiftSd()), Fmt.num(f.varianceRatio(), 3)));
    }
    return new DataDriftModel(facts, components, shifts, d.features().size(), labelFacts(run.labels()));
  }

  private static List<Fact> labelFacts(LabelResult l) {
    List<Fact> out = new ArrayList<>();
    if (l == null) {
      return out;
    }
    String unit = l.byEntity() ? l.entity() + " values" : "rows";
    out.add(new Fact("Centroids", l.centroids()));
    out.add(new Fact("Labelled", Fmt.count(l.labelled()) + " " + unit + (l.byEntity()
        ? ", each once, from its rows in this input" : "") + (l.unlabelled() > 0 ? " (" + Fmt.count(l.unlabelled())
        + " without a label)" : "")));
    StringBuilder sizes = new StringBuilder();
    l.sizes().forEach((c, n) -> sizes.append(sizes.length() == 0 ? "" : ", ").append(c).append(": ")
        .append(Fmt.count(n)));
    out.add(new Fact("Per cluster", sizes.toString()));
    if (l.rowSizes() != null) {
      long rows = l.rowSizes().values().stream().mapToLong(Long::longValue).sum();
      out.add(new Fact("Row labels", Fmt.count(rows) + " rows in row-labels/"));
    }
    return out;
  }
}
