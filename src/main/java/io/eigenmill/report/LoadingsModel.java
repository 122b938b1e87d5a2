package io.eigenmill.report;

import io.eigenmill.io.PcaModel;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * The loadings of the kept components, for the heatmap and the top-loadings bars. Rows are ordered so that related
 * features sit together: grouped by the component on which their loading is largest in magnitude, then by that
 * loading from most positive to most negative. Wide models show the features with the largest loadings only.
 *
 * @param components labels of the components shown ("PC1", ...)
 * @param shares explained-variance share of each shown component, formatted
 * @param maxAbs largest |loading| shown: the colour scale runs from -maxAbs to +maxAbs
 * @param top the largest loadings of the first (up to three) components
 */
public record LoadingsModel(
    List<String> components,
    List<String> shares,
    List<Row> rows,
    double maxAbs,
    int featuresTotal,
    int componentsTotal,
    List<TopList> top) {

  /** Most features drawn in the heatmap. */
  static final int MAX_FEATURES = 60;
  /** Most components drawn in the heatmap. */
  static final int MAX_COMPONENTS = 12;
  /** Bars per top-loadings chart. */
  static final int TOP_BARS = 8;

  /** @param group zero-based component on which the feature loads most */
  public record Row(String feature, int group, double[] values, List<String> texts) {}

  public record Bar(String feature, double value, String text) {}

  public record TopList(String component, String share, List<Bar> bars) {}

  static LoadingsModel of(RunResult run, ScreeModel scree) {
    PcaModel model = run.model();
    if (model == null || model.k() == 0) {
      return null;
    }
    int kc = Math.min(model.k(), MAX_COMPONENTS);
    List<String> labels = new ArrayList<>();
    List<String> shares = new ArrayList<>();
    for (int c = 0; c < kc; c++) {
      labels.add("PC" + (c + 1));
      shares.add(scree != null && c < scree.components().size() ? scree.components().get(c).ratioText() : "");
    }
    List<Row> rows = new ArrayList<>();
    for (int j = 0; j < model.d(); j++) {
      rows.add(row(model, j, kc));
    }
    rows.sort(Comparator.comparingDouble((Row r) -> -strongest(r)));
    // only the shown rows are written out (formatting every loading of a wide model took seconds)
    List<Row> shown = new ArrayList<>();
    for (Row r : rows.subList(0, Math.min(rows.size(), MAX_FEATURES))) {
      shown.add(withTexts(r));
    }
    shown.sort(Comparator.comparingInt(Row::group).thenComparingDouble(r -> -r.values()[r.group()]));
    double maxAbs = 0;
    for (Row r : shown) {
      maxAbs = Math.max(maxAbs, strongest(r));
    }
    List<TopList> top = new ArrayList<>();
    for (int c = 0; c < Math.min(3, model.k()); c++) {
      top.add(topList(model, c, shares.get(c)));
    }
    return new LoadingsModel(labels, shares, shown, maxAbs, model.d(), model.k(), top);
  }

  /** A feature's row without its texts ({@link #withTexts} adds them to the rows shown). */
  private static Row row(PcaModel model, int j, int kc) {
    double[] v = new double[kc];
    int group = 0;
    for (int c = 0; c < kc; c++) {
      v[c] = model.loading(j, c);
      if (Math.abs(v[c]) > Math.abs(v[group])) {
        group = c;
      }
    }
    return new Row(model.features().get(j), group, v, List.of());
  }

  private static Row withTexts(Row r) {
    List<String> texts = new ArrayList<>(r.values().length);
    for (double v : r.values()) {
      texts.add(Fmt.fixed(v, 2));
    }
    return new Row(r.feature(), r.group(), r.values(), texts);
  }

  private static double strongest(Row r) {
    return Math.abs(r.values()[r.group()]);
  }

  private static TopList topList(PcaModel model, int c, String share) {
    List<Bar> bars = new ArrayList<>();
    for (int j = 0; j < model.d(); j++) {
      bars.add(new Bar(model.features().get(j), model.loading(j, c), ""));
    }
    bars.sort(Comparator.comparingDouble((Bar b) -> -Math.abs(b.value())));
    List<Bar> top = new ArrayList<>();
    for (Bar b : bars.subList(0, Math.min(TOP_BARS, bars.size()))) {
      top.add(new Bar(b.feature(), b.value(), Fmt.fixed(b.value(), 3)));
    }
    return new TopList("PC" + (c + 1), share, List.copyOf(top));
  }

  /** How many features the model has beyond those shown. */
  public int featuresHidden() {
    return featuresTotal - rows.size();
  }
}
