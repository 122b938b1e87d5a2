package io.eigenmill.jobs;

import io.eigenmill.plan.JobPlan;
import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.spark.CentroidStore;
import io.eigenmill.spark.NearestCentroid;
import io.eigenmill.spark.OutputCommit;
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
final class ClusterStage {
  private final SparkSession spark;
  private final JobPlan plan;
  private final PcaModel model;
  private final OutputCommit out;

  ClusterStage(SparkSession spark, JobPlan plan, PcaModel model, OutputCommit out) {
    this.spark = spark;
    this.plan = plan;
    this.model = model;
    this.out = out;
  }

  ClusterOutcome cluster(Dataset<Row> table, ScoringStage.Outcome scored) {
    var settings = plan.settings().cluster();
    List<String> keys = new ArrayList<>(plan.keys());
    Dataset<Row> points;
    List<String> dims = new ArrayList<>();
    if (settings.space() == ClusterSpace.SCORES) {
      for (int c = 1; c <= model.k(); c++) {
        dims.add("pc_" + c);
      }
      points = spark.read().parquet(scored.scoresPath()).select(columns(keys, dims));
    } else {
      List<Column> cols = new ArrayList<>();
      keys.forEach(k -> cols.add(functions.col(k)));
      for (int j = 0; j < model.d(); j++) {
        String f = model.features().get(j);
        dims.add(f);
        cols.add(functions.col(f).cast("double").minus(model.means()[j]).divide(model.scales()[j]).as(f));
      }
      points = table.select(cols.toArray(new Column[0]));
    }
    if (!settings.entity().isEmpty() && !keys.contains(settings.entity())) {
      throw new InvalidJobException("cluster.entity = " + settings.entity() + ": the entity column must be one of"
          + " features.keys " + keys);
    }
    ClusterOutcome outcome = new ClusterJob(spark, settings, points, keys, dims, model,
        settings.space().word()).execute();
    ClusterJob.writeTables(outcome, out.staged("clusters"));
    return outcome;
  }

  private static Column[] columns(List<String> keys, List<String> dims) {
    List<Column> cols = new ArrayList<>();
    keys.forEach(k -> cols.add(functions.col(k)));
    dims.forEach(d -> cols.add(functions.col(d)));
    return cols.toArray(new Column[0]);
  }

  /** The score sample with each row's cluster, looked up in the assignments (by entity or by all keys). */
  ScoreSample colour(ScoreSample sample, ClusterOutcome outcome) {
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

  /** Labels the scored rows with saved centroids: {@code labels/} = keys, cluster, distance. Returns the sizes. */
  Map<Integer, Long> label(ScoringStage.Outcome scored, String centroidsPath) {
    CentroidStore.StoredCentroids stored = CentroidStore.read(spark, centroidsPath);
    List<String> dims = stored.dimensions();
    Dataset<Row> scores = spark.read().parquet(scored.scoresPath());
    List<String> present = List.of(scores.columns());
    for (String d : dims) {
      if (!present.contains(d)) {
        throw new InvalidJobException("apply.centroids = " + centroidsPath + ": the centroids have dimension " + d
            + ", which the scores of this model lack (scores: " + String.join(", ", present) + ")");
      }
    }
    Dataset<Row> labelled = NearestCentroid.label(scores.select(columns(plan.keys(), dims)), dims,
        stored.centroids());
    String path = out.staged("labels");
    labelled.drop(dims.toArray(new String[0])).write().parquet(path);
    Map<Integer, Long> sizes = new java.util.TreeMap<>();
    for (Row r : spark.read().parquet(path).groupBy("cluster").count().collectAsList()) {
      sizes.put(r.isNullAt(0) ? -1 : r.getInt(0), r.getLong(1));
    }
    return sizes;
  }
}
