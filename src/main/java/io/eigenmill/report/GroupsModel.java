package io.eigenmill.report;

import io.eigenmill.engine.KeyValues;
import io.eigenmill.io.GroupModels;
import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.monitor.math.SharedSubspace;
import io.eigenmill.pca.GroupFit;
import io.eigenmill.pca.Groups;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * The groups of a grouped fit ({@code reduce.group-by}) or of an applied grouped model: who they are, their rows and
 * models (largest first, at most {@link #TABLE_ROWS}), the scree curves of the largest (at most {@link #SCREES}),
 * and how far each group's subspace lies from the pooled model's (largest principal angle, at most {@link #BARS}).
 * Everything is read from the records; the angles are computed by {@link SharedSubspace}.
 *
 * @param apply true for an apply job (no pooled model and no spectra beyond the stored eigenvalues)
 * @param intro the section's opening sentences
 * @param rows the table, in the order of the records (rows read, descending), capped at {@link #TABLE_ROWS}
 * @param total all groups
 * @param screes the largest groups with a model, at most {@link #SCREES}
 * @param pooledShares the pooled model's variance share per component (empty in an apply job)
 * @param pooledK the pooled model's k
 * @param angles groups with a model, largest angle first, at most {@link #BARS}
 * @param anglesTotal groups with an angle
 * @param reading one sentence on the angles
 * @param unknown facts on rows of groups without a model (empty when there were none and the job is a fit)
 */
public record GroupsModel(
    boolean apply,
    List<String> columns,
    String intro,
    List<Row> rows,
    int total,
    List<Scree> screes,
    double[] pooledShares,
    int pooledK,
    List<Angle> angles,
    int anglesTotal,
    String reading,
    List<Fact> unknown) {

  /** Groups listed in the table. */
  static final int TABLE_ROWS = 50;
  /** Scree curves drawn. */
  static final int SCREES = 12;
  /** Bars of the angle chart. */
  static final int BARS = 50;
  /** Components drawn per scree curve. */
  static final int SCREE_COMPONENTS = 20;
  /** Groups named in the reading of the angles. */
  static final int NAMED = 3;

  /**
   * One group.
   *
   * @param keys the key's values ("null" for a null value), one per group column
   * @param label the key's values joined by " / "
   * @param texts the table cells after the label: rows read, rows used, k, first share, kept share, total variance
   * @param reason why it has no model; null when it has one
   */
  public record Row(List<String> keys, String label, String display, List<String> texts, String reason) {}

  /** @param shares variance share per component, the first {@link #SCREE_COMPONENTS} */
  public record Scree(String label, String display, long rows, int k, double[] shares) {}

  /** @param degrees the largest principal angle to the pooled subspace; NaN when it cannot be computed */
  public record Angle(String label, String display, double degrees, String text) {}

  static GroupsModel of(RunResult run) {
    if (run.fit() != null && run.fit().groups() != null) {
      return ofFit(run);
    }
    if (run.appliedGroups() != null) {
      return ofApply(run);
    }
    return null;
  }

  private static GroupsModel ofFit(RunResult run) {
    Groups g = run.fit().groups();
    List<String> columns = g.by().names();
    PcaModel pooled = run.fit().model();
    int withModel = (int) (g.groups().size() - g.skipped());
    String cols = String.join(", ", columns);
    StringBuilder intro = new StringBuilder();
    intro.append("The rows were grouped by ").append(cols).append(": ").append(count(g.groups().size(), "group"))
        .append(", ").append(Fmt.count(withModel)).append(" with a model of its own. A group needed ")
        .append(Fmt.count(g.minRows())).append(" usable rows for a model");
    intro.append(g.skipped() == 0 ? "; every group had them." : "; " + count(g.skipped(), "group")
        + (g.skipped() == 1 ? " has" : " have") + " no model (the table says why).");
    intro.append(" The groups were solved ").append(g.onDriver() ? "on the driver" : "on the executors")
        .append(". Scores use each row's group model. The other sections show the pooled model of all rows (k = ")
        .append(pooled.k()).append(").");
    List<Row> rows = new ArrayList<>();
    List<Scree> screes = new ArrayList<>();
    List<Angle> angles = new ArrayList<>();
    for (GroupFit f : g.groups()) {
      String label = label(f.key());
      String display = f.key().display(columns);
      if (rows.size() < TABLE_ROWS) {
        rows.add(row(label, display, f));
      }
      if (!f.hasModel()) {
        continue;
      }
      double[] shares = f.solved().spectrum().varianceShares();
      if (screes.size() < SCREES) {
        screes.add(new Scree(label, display, f.rowsUsed(), f.solved().model().k(),
            java.util.Arrays.copyOf(shares, Math.min(SCREE_COMPONENTS, shares.length))));
      }
      double deg = Math.toDegrees(largestAngle(pooled, f.solved().model()));
      angles.add(new Angle(label, display, deg, Double.isNaN(deg) ? "n/a" : Fmt.fixed(deg, 1) + "°"));
    }
    angles.sort(Comparator.comparingDouble((Angle a) -> Double.isNaN(a.degrees()) ? -1 : -a.degrees()));
    double[] pooledShares = run.fit().spectrum().varianceShares();
    return new GroupsModel(false, columns, intro.toString(), rows, g.groups().size(), screes,
        java.util.Arrays.copyOf(pooledShares, Math.min(SCREE_COMPONENTS, pooledShares.length)), pooled.k(),
        List.copyOf(angles.subList(0, Math.min(BARS, angles.size()))), angles.size(), reading(angles),
        unknown(run, false));
  }

  private static GroupsModel ofApply(RunResult run) {
    GroupModels gm = run.appliedGroups();
    List<Row> all = new ArrayList<>();
    List<KeyValues> keys = new ArrayList<>(gm.models().keySet());
    // largest first, as a fit lists them; the stored map's order is kept between equal row counts
    keys.sort(Comparator.comparingLong((KeyValues k) -> -gm.models().get(k).rows()));
    for (KeyValues k : keys) {
      PcaModel m = gm.models().get(k);
      all.add(new Row(values(k), label(k), k.display(gm.columns()), List.of(Fmt.count(m.rows()), Fmt.count(m.k()),
          Fmt.percent(share(m, 1), 1), Fmt.percent(share(m, m.k()), 1), Fmt.num(m.totalVariance())), null));
    }
    String intro = "This job applied a grouped model: one model per value of " + String.join(", ", gm.columns())
        + ", " + count(keys.size(), "group") + " with a model. Each row was scored with its group's model; rows of"
        + " other groups followed apply.unknown-group (" + run.plan().settings().apply().unknownGroup().word()
        + "). The groups below are listed as they were fitted.";
    return new GroupsModel(true, gm.columns(), intro, List.copyOf(all.subList(0, Math.min(TABLE_ROWS, all.size()))),
        all.size(), List.of(), new double[0], 0, List.of(), 0, "", unknown(run, true));
  }

  /** The share of variance of the first {@code c} components of a stored model. */
  private static double share(PcaModel m, int c) {
    double sum = 0;
    for (int i = 0; i < Math.min(c, m.eigenvalues().length); i++) {
      sum += m.eigenvalues()[i];
    }
    return m.totalVariance() > 0 ? sum / m.totalVariance() : Double.NaN;
  }

  private static Row row(String label, String display, GroupFit f) {
    if (!f.hasModel()) {
      return new Row(values(f.key()), label, display, List.of(Fmt.count(f.rowsRead()), Fmt.count(f.rowsUsed()), "",
          "", "", ""),
          f.skipReason());
    }
    PcaModel m = f.solved().model();
    double[] cumulative = f.solved().spectrum().cumulativeVarianceShares();
    double[] shares = f.solved().spectrum().varianceShares();
    return new Row(values(f.key()), label, display, List.of(Fmt.count(f.rowsRead()), Fmt.count(f.rowsUsed()), Fmt.count(m.k()),
        Fmt.percent(shares.length > 0 ? shares[0] : Double.NaN, 1),
        Fmt.percent(m.k() > 0 ? cumulative[m.k() - 1] : 0, 1), Fmt.num(m.totalVariance())), null);
  }

  /**
   * The largest principal angle between the group's kept subspace and the pooled model's, in radians: compared on
   * the group's features (a group may have dropped columns that are constant within it; the pooled loadings of those
   * features are left out and the rest re-orthonormalised), in the pooled model's scaled coordinates (with
   * standardize each model has its own scales; the group's loadings are carried over by its scales over the pooled
   * ones, so that both subspaces are the same sets of directions of the data measured one way). See
   * {@link SharedSubspace}.
   */
  static double largestAngle(PcaModel pooled, PcaModel group) {
    List<Integer> gi = new ArrayList<>();
    List<Integer> pi = new ArrayList<>();
    for (int j = 0; j < group.d(); j++) {
      int p = pooled.features().indexOf(group.features().get(j));
      if (p >= 0) {
        gi.add(j);
        pi.add(p);
      }
    }
    int d = gi.size();
    double[] a = new double[d * pooled.k()];
    double[] b = new double[d * group.k()];
    double[] toRef = new double[d];
    for (int i = 0; i < d; i++) {
      for (int c = 0; c < pooled.k(); c++) {
        a[i + c * d] = pooled.loading(pi.get(i), c);
      }
      for (int c = 0; c < group.k(); c++) {
        b[i + c * d] = group.loading(gi.get(i), c);
      }
      double ps = pooled.scales()[pi.get(i)];
      toRef[i] = ps > 0 ? group.scales()[gi.get(i)] / ps : 1.0;
    }
    return SharedSubspace.largestAngle(a, pooled.k(), b, group.k(), toRef, d);
  }

  private static String reading(List<Angle> sorted) {
    List<String> named = new ArrayList<>();
    for (Angle a : sorted) {
      if (named.size() == NAMED || Double.isNaN(a.degrees())) {
        break;
      }
      named.add(a.label() + " (" + a.text() + ")");
    }
    if (named.isEmpty()) {
      return "";
    }
    double max = sorted.get(0).degrees();
    if (max < 5) {
      return "Every group's subspace lies within " + Fmt.fixed(Math.ceil(max), 0) + "° of the pooled one: the"
          + " groups share the pooled model's components.";
    }
    return "Groups whose subspace differs most from the pooled one: " + String.join(", ", named) + ".";
  }

  private static List<Fact> unknown(RunResult run, boolean apply) {
    MonitorResult m = run.monitor();
    if (m == null || (!apply && m.unknownGroupRows() == 0)) {
      return List.of();
    }
    String rule = run.plan().settings().apply().unknownGroup().word();
    List<Fact> out = new ArrayList<>();
    out.add(new Fact("Rows of groups without a model", Fmt.count(m.unknownGroupRows()) + (m.unknownGroupRows() == 0
        ? "" : switch (rule) {
          case "skip" -> ": left out (apply.unknown-group = skip)";
          case "flag" -> ": kept with null scores and flagged (apply.unknown-group = flag)";
          default -> " (apply.unknown-group = " + rule + ")";
        })));
    if (!m.unknownGroups().isEmpty()) {
      out.add(new Fact(m.unknownGroups().size() == 1 ? "That group" : "Those groups",
          String.join("; ", m.unknownGroups())));
    }
    return out;
  }

  static String label(KeyValues key) {
    return String.join(" / ", values(key));
  }

  static List<String> values(KeyValues key) {
    List<String> values = new ArrayList<>();
    for (String v : key.texts()) {
      values.add(v == null ? "null" : v);
    }
    return values;
  }

  private static String count(long n, String word) {
    return Fmt.count(n) + " " + word + (n == 1 ? "" : "s");
  }

  /** The table's column titles after the key columns. */
  List<String> headers() {
    return apply ? List.of("rows at fit", "k", "PC1 share", "share of the k kept", "total variance")
        : List.of("rows read", "rows used", "k", "PC1 share", "share of the k kept", "total variance");
  }
}
