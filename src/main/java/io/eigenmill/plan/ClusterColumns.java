package io.eigenmill.plan;

import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.JobSettings;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.types.ArrayType;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.MapType;
import org.apache.spark.sql.types.StructType;

/**
 * The checks of {@code cluster.entity} against the input, made by the planner before any data is read: the column
 * exists, holds one value per row (not an array, map or struct), is among {@code features.keys} (the points of a
 * run carry the keys beside the scores or features) and is not itself clustered ({@code cluster.space = features}
 * with the entity among the features); and no column the clustering carries has a name it writes after them
 * ({@link #checkCarried}). Cost: a look at the schema.
 */
public final class ClusterColumns {
  private ClusterColumns() {}

  /** The nearest centroid's number, in clusters/assignments, labels/ and row-labels/. */
  public static final String CLUSTER = "cluster";
  /** The distance to the nearest centroid. */
  public static final String DISTANCE = "distance";
  /** The distance to the second nearest centroid (clusters/assignments). */
  public static final String SECOND_DISTANCE = "second_distance";

  private static final List<String> WRITTEN = List.of(CLUSTER, DISTANCE, SECOND_DISTANCE);

  /**
   * Adds one problem per broken rule to {@code problems}.
   *
   * @param keys the resolved {@code features.keys}
   * @param features the feature columns of the job (the fit's, or the applied model's)
   */
  static void check(JobSettings settings, StructType schema, List<String> keys, List<String> features,
      List<String> problems) {
    checkCarried(settings, keys, problems);
    JobSettings.Cluster c = settings.cluster();
    String entity = c.entity();
    if (!c.enabled() || entity.isEmpty()) {
      return;
    }
    String named = "cluster.entity = " + entity + ": ";
    var index = schema.getFieldIndex(entity);
    if (index.isEmpty()) {
      problems.add(named + "no such column in the input (columns: " + String.join(", ", schema.fieldNames()) + ")");
      return;
    }
    DataType type = schema.fields()[(Integer) index.get()].dataType();
    if (type instanceof ArrayType || type instanceof MapType || type instanceof StructType) {
      problems.add(named + "column " + entity + " has type " + type.simpleString() + "; an entity column must hold"
          + " one value per row (a string, number, date, timestamp or boolean), not an array, map or struct");
    }
    if (!keys.contains(entity)) {
      problems.add(named + "the entity column must be one of features.keys " + keys + "; add " + entity
          + " to features.keys");
    }
    if (c.space() == ClusterSpace.FEATURES && features.contains(entity)) {
      problems.add(named + "is one of the clustered columns (cluster.space = features and " + entity + " is a"
          + " feature); remove it from features.columns or cluster another column");
    }
  }

  /**
   * The columns the clustering carries must not have a name it writes after them ({@link #CLUSTER},
   * {@link #DISTANCE}, {@link #SECOND_DISTANCE}, in any case: Spark's names match without regard to case), or the
   * table would hold two columns of one name and its write would fail after the fit's pass and the k-means runs.
   * A fit's clusters/assignments carry the keys, or the entity alone ({@code cluster.entity}); labels/ and
   * row-labels/ of {@code apply.centroids} carry the keys (with entity centroids labels/ carries the entity, but
   * which entity is known only when the centroids are read, so every key is checked).
   */
  static void checkCarried(JobSettings settings, List<String> keys, List<String> problems) {
    String rule = " writes " + String.join(", ", WRITTEN) + " after the columns it carries (names match in any case)";
    JobSettings.Cluster c = settings.cluster();
    if (c.enabled() && !c.entity().isEmpty() && written(c.entity())) {
      problems.add("cluster.entity = " + c.entity() + ": the entity column has the name of a column that"
          + " clusters/assignments" + rule + "; cluster a copy of it under another name");
    } else if (c.enabled() && c.entity().isEmpty()) {
      ScoreColumns.refuseKeys(keys, ClusterColumns::written, "clusters/assignments" + rule, problems);
    }
    if (!settings.apply().centroids().isEmpty()) {
      ScoreColumns.refuseKeys(keys, ClusterColumns::written, "labels/ (apply.centroids)" + rule, problems);
    }
  }

  /** Whether the clustering writes a column named {@code name} (any case). */
  private static boolean written(String name) {
    return WRITTEN.contains(name.toLowerCase(Locale.ROOT));
  }
}
