package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;

/** Feature names of the loadings charts fit in the drawing: none starts left of its edge. */
class SpectrumChartsTest {
  private static final Pattern ROW_LABEL =
      Pattern.compile("<text x=\"([0-9.]+)\" y=\"[0-9.]+\" text-anchor=\"end\" class=\"row-label\">([^<]*)</text>");

  /** Left edge of each right-aligned row label, at the width the page's font gives it (Svg.textWidth). */
  private static List<Double> leftEdges(String svg) {
    List<Double> edges = new ArrayList<>();
    Matcher m = ROW_LABEL.matcher(svg);
    while (m.find()) {
      edges.add(Double.parseDouble(m.group(1)) - Svg.textWidth(m.group(2), 12));
    }
    return edges;
  }

  @Test
  void longFeatureNamesOfTheTopBarsStartInsideTheDrawing() {
    List<LoadingsModel.Bar> bars = List.of(
        new LoadingsModel.Bar("edge_cache_disk_read_latency_p99_ms", 0.61, "0.61"),
        new LoadingsModel.Bar("tcp_retransmits_per_second", -0.42, "-0.42"),
        new LoadingsModel.Bar("cpu", 0.2, "0.20"));
    double labelWidth = SpectrumCharts.labelWidth(bars.stream().map(LoadingsModel.Bar::feature).toList());
    String svg = SpectrumCharts.topBars(new LoadingsModel.TopList("PC 1", "41%", bars), 0.7, labelWidth, 0);
    List<Double> edges = leftEdges(svg);
    assertEquals(3, edges.size(), "one label per bar");
    for (double e : edges) {
      assertTrue(e >= 0, "a label starts at " + e + ", left of the drawing");
    }
    // the 26-character name is written whole (it fits in the widest label column, 230 units = 29 characters)
    assertTrue(svg.contains(">tcp_retransmits_per_second<"), "a name that fits is not shortened");
  }
}
