package io.eigenmill.kmeans;

import io.eigenmill.settings.Choices.ClusterSpace;
import java.util.Map;

/**
 * What labelling the new data with saved centroids ({@code apply.centroids}) produced. Centroids of entities label
 * each entity once per run (its aggregate over all rows of the job's input, built as the fit built it); centroids
 * of rows label each row.
 *
 * @param centroids the path the centroids were read from
 * @param entity the entity column the centroids cluster, "" when they cluster rows
 * @param spread the entity points carry each coordinate's sd as well as its mean
 * @param space the clustered space of the centroids (scores when the centroids do not say)
 * @param labelled entities (or rows, for row centroids) given a cluster in {@code labels/}
 * @param unlabelled entities (or rows) left with a null cluster (a null, NaN or infinite coordinate)
 * @param sizes entities (or rows) per cluster, by cluster
 * @param rowSizes with entity centroids and {@code apply.label-rows}, rows per cluster in {@code row-labels/}
 *     (key -1: rows without a label); null otherwise
 */
public record LabelResult(
    String centroids,
    String entity,
    boolean spread,
    ClusterSpace space,
    long labelled,
    long unlabelled,
    Map<Integer, Long> sizes,
    Map<Integer, Long> rowSizes) {

  public boolean byEntity() {
    return !entity.isEmpty();
  }
}
