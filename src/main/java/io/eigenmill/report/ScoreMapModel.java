package io.eigenmill.report;

import io.eigenmill.kmeans.ClusterResult;
import io.eigenmill.monitor.ScoreSample;
import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.List;

/**
 * The score map: the run's seeded sample of component scores, PC1 against PC2 and PC1 against PC3 (or PC1 against
 * the sample order when only one component was kept), coloured by cluster when clustering ran.
 *
 * @param points one array per sampled row: its first (up to three) scores
 * @param clusters cluster of each sampled row, or null
 * @param legend one entry per cluster, when clusters exist
 */
public record ScoreMapModel(
    List<Plot> plots,
    double[][] points,
    int[] clusters,
    List<LegendEntry> legend,
    int sampleSize,
    String caption) {

  /** @param y zero-based component on the vertical axis, or -1 for the sample order */
  public record Plot(String id, int x, int y, String xLabel, String yLabel) {}

  /** @param index position of the cluster in the palette */
  public record LegendEntry(int cluster, int index, String label) {}

  static ScoreMapModel of(RunResult run, ScreeModel scree) {
    ScoreSample sample = run.sample();
    if (sample == null || sample.scores() == null || sample.scores().length == 0) {
      return null;
    }
    int dims = Integer.MAX_VALUE;
    for (double[] row : sample.scores()) {
      dims = Math.min(dims, row.length);
    }
    if (dims == 0) {
      return null;
    }
    List<Plot> plots = new ArrayList<>();
    if (dims == 1) {
      plots.add(new Plot("chart-scores-pc1", 0, -1, axisLabel(0, scree), "row in the sample"));
    } else {
      plots.add(new Plot("chart-scores-pc1-pc2", 0, 1, axisLabel(0, scree), axisLabel(1, scree)));
      if (dims >= 3) {
        plots.add(new Plot("chart-scores-pc1-pc3", 0, 2, axisLabel(0, scree), axisLabel(2, scree)));
      }
    }
    int[] clusters = sample.clusters();
    List<LegendEntry> legend = clusters == null ? List.of() : legend(run.clusters(), clusters);
    String caption = Fmt.count(sample.scores().length) + " rows, a seeded sample of the scored rows"
        + (clusters != null ? "; colour and shape show the cluster" : "");
    return new ScoreMapModel(plots, sample.scores(), clusters, legend, sample.scores().length, caption);
  }

  /** "PC1 (42.31% of variance)". */
  static String axisLabel(int c, ScreeModel scree) {
    String share = scree != null && c < scree.components().size()
        ? " (" + scree.components().get(c).ratioText() + " of variance)" : "";
    return "PC" + (c + 1) + share;
  }

  private static List<LegendEntry> legend(ClusterResult result, int[] clusters) {
    int max = -1;
    for (int c : clusters) {
      max = Math.max(max, c);
    }
    if (result != null) {
      max = Math.max(max, result.k() - 1);
    }
    List<LegendEntry> out = new ArrayList<>();
    for (int c = 0; c <= max; c++) {
      String unit = result != null && !result.entity().isEmpty() ? " entities)" : " rows)";
      String size = result != null && c < result.sizes().length
          ? " (" + Fmt.count(result.sizes()[c]) + unit : "";
      out.add(new LegendEntry(c, c, "cluster " + c + size));
    }
    return out;
  }
}
