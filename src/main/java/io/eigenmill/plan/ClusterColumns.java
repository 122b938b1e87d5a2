package io.eigenmill.plan;

import io.eigenmill.settings.Choices.ClusterSpace;
import io.eigenmill.settings.JobSettings;
import java.util.List;
import org.apache.spark.sql.types.ArrayType;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.MapType;
import org.apache.spark.sql.types.StructType;

/**
 * The checks of {@code cluster.entity} against the input, made by the planner before any data is read: the column
 * exists, holds one value per row (not an array, map or struct), is among {@code features.keys} (the points of a
 * run carry the keys beside the scores or features) and is not itself clustered ({@code cluster.space = features}
 * with the entity among the features). Cost: a look at the schema.
 */
final class ClusterColumns {
  private ClusterColumns() {}

  /**
   * Adds one problem per broken rule to {@code problems}.
   *
   * @param keys the resolved {@code features.keys}
   * @param features the feature columns of the job (the fit's, or the applied model's)
   */
  static void check(JobSettings settings, StructType schema, List<String> keys, List<String> features,
      List<String> problems) {
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
}
