package io.eigenmill.kmeans;

import io.eigenmill.io.CentroidStore;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.io.PcaModel;
import io.eigenmill.monitor.ScoreSample;
import io.eigenmill.monitor.ScoringStage;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.ScoreColumns;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.InvalidJobException;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;

/**
 * Clustering inside a run: builds the points (the written scores, or the prepared features), runs
 * {@link ClusterJob}, writes {@code clusters/}, and colours the report's score sample by cluster. Also labels scored
 * rows with saved centroids ({@code apply.centroids}) into {@code labels/}.
 */
public final class ClusterStage {
  private final SparkSession spark;
  private final JobPlan plan;
  private final PcaModel model;
  private final OutputCommit out;

  public ClusterStage(SparkSession spark, JobPlan plan, PcaModel model, OutputCommit out) {
    this.spark = spark;
    this.plan = plan;
    this.model = model;
    this.out = out;
  }

  public ClusterOutcome cluster(Dataset<Row> table, ScoringStage.Outcome scored) {
    var settings = plan.settings().cluster();
    List<String> keys = new ArrayList<>(plan.keys());
    List<String> dims = new ArrayList<>();
    if (settings.space() == ClusterSpace.SCORES) {
      for (int c = 1; c <= model.k(); c++) {
        dims.add(ScoreColumns.component(c));
      }
    } else {
      dims.addAll(model.features());
    }
    Dataset<Row> points = points(table, scored, settings.space(), dims);
    ClusterOutcome outcome = new ClusterJob(spark, settings, points, keys, dims, model, settings.space()).execute();
    ClusterJob.writeTables(outcome, out.staged("clusters"));
    return outcome;
  }

  /**
   * The keys and the point columns {@code dims} of every row: scores read back from the written {@code scores/},
   * or features of {@code table} prepared as (x - mean) / scale with the model's means and scales.
   */
  private Dataset<Row> points(Dataset<Row> table, ScoringStage.Outcome scored, ClusterSpace space,
      List<String> dims) {
    if (space == ClusterSpace.SCORES) {
      return spark.read().parquet(scored.scoresPath()).select(columns(plan.keys(), dims));
    }
    List<Column> cols = new ArrayList<>();
    plan.keys().forEach(k -> cols.add(functions.col(k)));
    for (String f : dims) {
      int j = model.features().indexOf(f);
      cols.add(functions.col(f).cast("double").minus(model.means()[j]).divide(model.scales()[j]).as(f));
    }
    return table.select(cols.toArray(new Column[0]));
  }

  private static Column[] columns(List<String> keys, List<String> dims) {
    List<Column> cols = new ArrayList<>();
    keys.forEach(k -> cols.add(functions.col(k)));
    dims.forEach(d -> cols.add(functions.col(d)));
    return cols.toArray(new Column[0]);
  }

  /** The score sample with each row's cluster, looked up in the assignments (by entity or by all keys). */
  public ScoreSample colour(ScoreSample sample, ClusterOutcome outcome) {
    if (sample == null || sample.keyNames().isEmpty()) {
      return sample;
    }
    String entity = plan.settings().cluster().entity();
    List<String> by = entity.isEmpty() ? sample.keyNames() : List.of(entity);
    List<Column> keyText = new ArrayList<>();
    by.forEach(k -> keyText.add(functions.coalesce(functions.col(k).cast("string"), functions.lit(""))));
    Map<String, Integer> clusterOf = new HashMap<>();
    Dataset<Row> a = outcome.assignments().select(functions.concat_ws("\u0001", keyText.toArray(new Column[0])),
        functions.col("cluster"));
    if (!entity.isEmpty()) {
      for (Row r : a.collectAsList()) {
        if (!r.isNullAt(1)) {
          clusterOf.put(r.getString(0), r.getInt(1));
        }
      }
    } else {
      List<String> wanted = new ArrayList<>();
      for (List<String> kv : sample.keyValues()) {
        wanted.add(String.join("\u0001", kv));
      }
      Dataset<Row> keysWanted = spark.createDataset(wanted, org.apache.spark.sql.Encoders.STRING()).toDF("k");
      for (Row r : a.toDF("k", "cluster").join(functions.broadcast(keysWanted), "k").collectAsList()) {
        if (!r.isNullAt(1)) {
          clusterOf.put(r.getString(0), r.getInt(1));
        }
      }
    }
    int at = entity.isEmpty() ? -1 : sample.keyNames().indexOf(entity);
    int[] clusters = new int[sample.keyValues().size()];
    for (int i = 0; i < clusters.length; i++) {
      List<String> kv = sample.keyValues().get(i);
      String key = at >= 0 ? kv.get(at) : String.join("\u0001", kv);
      clusters[i] = clusterOf.getOrDefault(key, -1);
    }
    return new ScoreSample(sample.keyNames(), sample.keyValues(), sample.scores(), clusters);
  }

  /**
   * Labels the new data with saved centroids into {@code labels/}. Centroids of entities ({@code cluster.entity} in
   * the fit, recorded in the centroids table) label each entity once: its point is built from all its rows in this
   * job's input exactly as the fit built it ({@link ClusterJob#entityPoints}: mean, and with spread sd, of each
   * coordinate), and {@code labels/} holds the entity, {@code rows}, {@code cluster}, {@code distance}. With
   * {@code labelRows} each row is also labelled into {@code row-labels/} (keys, cluster, distance), as an entity of
   * one row (its sds 0, as the fit has them for a one-row entity). Centroids of rows label each row into
   * {@code labels/} (keys, cluster, distance). Cost: one aggregation (entities) or one pass (rows) over the points,
   * plus a count of the written labels per cluster.
   */
  public LabelResult label(Dataset<Row> table, ScoringStage.Outcome scored, String centroidsPath, boolean labelRows) {
    CentroidStore.StoredCentroids stored = CentroidStore.read(spark, centroidsPath);
    List<String> dims = stored.dimensions();
    List<String> base = stored.pointColumns();
    ClusterSpace space = stored.space();
    List<String> present = new ArrayList<>();
    if (space == ClusterSpace.SCORES) {
      present.addAll(List.of(spark.read().parquet(scored.scoresPath()).columns()));
    } else {
      present.addAll(model.features());
    }
    for (String d : base) {
      if (!present.contains(d)) {
        throw new InvalidJobException("apply.centroids = " + centroidsPath + ": the centroids have dimension " + d
            + ", which the " + space.word() + " of this model lack ("
            + space.word() + ": " + String.join(", ", present) + ")");
      }
    }
    String entity = stored.entity();
    if (!entity.isEmpty() && !plan.keys().contains(entity)) {
      throw new InvalidJobException("apply.centroids = " + centroidsPath + ": the centroids cluster entities of"
          + " column " + entity + " (cluster.entity of the fit), which is not among features.keys " + plan.keys()
          + "; add " + entity + " to features.keys");
    }
    Dataset<Row> points = points(table, scored, space, base);
    String path = out.staged("labels");
    if (entity.isEmpty()) {
      NearestCentroid.label(points, dims, stored.centroids()).drop(dims.toArray(new String[0])).write()
          .parquet(path);
    } else {
      Dataset<Row> aggregates = ClusterJob.entityPoints(points, base, entity, stored.spread(), "rows");
      NearestCentroid.label(aggregates, dims, stored.centroids())
          .select(columns(List.of(entity, "rows", "cluster", "distance"), List.of())).write().parquet(path);
    }
    Map<Integer, Long> sizes = sizes(path);
    Map<Integer, Long> rowSizes = null;
    if (!entity.isEmpty() && labelRows) {
      Dataset<Row> rows = points;
      if (stored.spread()) {
        for (String c : base) {
          rows = rows.withColumn(c + "_sd", functions.lit(0.0));
        }
      }
      String rowPath = out.staged("row-labels");
      NearestCentroid.label(rows, dims, stored.centroids()).drop(dims.toArray(new String[0])).write()
          .parquet(rowPath);
      rowSizes = sizes(rowPath);
    }
    long unlabelled = sizes.getOrDefault(-1, 0L);
    long labelled = sizes.values().stream().mapToLong(Long::longValue).sum() - unlabelled;
    sizes.remove(-1);
    return new LabelResult(centroidsPath, entity, stored.spread(), stored.space(), labelled, unlabelled, sizes,
        rowSizes);
  }

  /** Labels per cluster in the written table at {@code path} (key -1: no label). */
  private Map<Integer, Long> sizes(String path) {
    Map<Integer, Long> sizes = new java.util.TreeMap<>();
    for (Row r : spark.read().parquet(path).groupBy("cluster").count().collectAsList()) {
      sizes.put(r.isNullAt(0) ? -1 : r.getInt(0), r.getLong(1));
    }
    return sizes;
  }
}
