package io.eigenmill.kmeans;

import java.util.List;
import java.util.Map;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;

/**
 * What a clustering run produced: the result record and its four tables, to be written by
 * {@link ClusterJob#writeTables}. The tables are lazy Spark Datasets: {@code assignments} reads the points again
 * when written (one pass); the three small tables are built on the driver.
 *
 * @param assignments the key columns (or the entity column), {@code cluster} (int, 0-based), {@code distance} to
 *     the own centroid and {@code second_distance} to the second-nearest (Euclidean, in the clustered space; null
 *     when k = 1, and cluster and distances null for a row with a null or non-finite coordinate)
 * @param centroids {@code cluster}, one column per dimension of the clustered space, {@code orig_<feature>} per
 *     feature in original units
 * @param profiles per cluster and distinguishing feature (largest |standardised difference| first): {@code cluster},
 *     {@code size}, {@code share}, {@code rank}, {@code feature}, {@code cluster_mean}, {@code overall_mean},
 *     {@code standardized_difference}
 * @param kSelection per k tried: {@code k}, {@code wcss}, {@code silhouette}, {@code calinski_harabasz},
 *     {@code davies_bouldin}, {@code chosen}, {@code sizes} (cluster sizes of that k's best run, largest first)
 * @param warnings things the user may want to act on (skipped rows, runs stopped by the iteration cap, re-seeded
 *     empty clusters), each a sentence
 * @param timings seconds per stage, in order
 * @param passes passes over the cached points (the summary and the Lloyd iterations; the k-means|| rounds and the
 *     weights pass too when the initialisation ran over all rows)
 */
public record ClusterOutcome(
    ClusterResult result,
    Dataset<Row> assignments,
    Dataset<Row> centroids,
    Dataset<Row> profiles,
    Dataset<Row> kSelection,
    List<String> warnings,
    Map<String, Double> timings,
    int passes) {}
