package io.eigenmill.report;

import io.eigenmill.record.RunResult;
import java.util.ArrayList;
import java.util.List;

/**
 * What the report shows, derived from a {@link RunResult} by selecting, ordering and formatting only: every number
 * on the page is a value of the result records. A section is null when the run does not have its data; the
 * renderer ({@link HtmlReport}) draws from this model alone.
 */
public record ReportModel(
    String title,
    HeaderModel header,
    List<String> warnings,
    ScreeModel scree,
    LoadingsModel loadings,
    ScoreMapModel scores,
    MonitoringModel monitoring,
    ClusterModel clusters,
    CompressionModel compression,
    DriftModel drift,
    DataDriftModel dataDrift,
    SnapshotModel snapshots,
    GroupsModel groups,
    LongInputModel longInput) {

  /** Pure: reads the records, never Spark or the file system. */
  public static ReportModel of(RunResult run) {
    ScreeModel scree = ScreeModel.of(run);
    List<String> warnings = run.warnings() == null ? List.of() : List.copyOf(run.warnings());
    return new ReportModel("eigenmill report: " + run.plan().settings().name(), HeaderModel.of(run, scree), warnings,
        scree, LoadingsModel.of(run, scree), ScoreMapModel.of(run, scree), MonitoringModel.of(run),
        ClusterModel.of(run), CompressionModel.of(run), DriftModel.of(run), DataDriftModel.of(run),
        SnapshotModel.of(run), GroupsModel.of(run), LongInputModel.of(run));
  }

  /** The ids of the sections this report has, in page order. */
  public List<String> sectionIds() {
    List<String> ids = new ArrayList<>();
    ids.add("section-header");
    add(ids, !warnings.isEmpty(), "section-warnings");
    add(ids, longInput != null, "section-long-input");
    add(ids, snapshots != null, "section-snapshots");
    add(ids, scree != null, "section-scree");
    add(ids, loadings != null, "section-loadings");
    add(ids, scores != null, "section-scores");
    add(ids, groups != null, "section-groups");
    add(ids, monitoring != null, "section-monitoring");
    add(ids, clusters != null, "section-clusters");
    add(ids, compression != null, "section-compression");
    add(ids, dataDrift != null, "section-data-drift");
    add(ids, drift != null, "section-drift");
    return ids;
  }

  private static void add(List<String> ids, boolean present, String id) {
    if (present) {
      ids.add(id);
    }
  }
}
