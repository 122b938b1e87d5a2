package io.eigenmill.api;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;

import io.eigenmill.testing.Datasets;
import io.eigenmill.testing.SparkSuite;
import java.util.List;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.junit.jupiter.api.Test;

/**
 * The README's "Java API" example, word for word (EigenmillReadmeTest keeps the two the same): a fit of USArrests
 * through the API, checked against R's prcomp (the shared dataset's reference values). Tolerances: 1e-8 on
 * eigenvalues (FitJobTest's 1e-9 of the largest, 2.5), 1e-7 on loadings (FitJobTest's bound for this spectrum's
 * gaps) and 1e-6 on scores (a score sums 4 standardized values, each below 3.2 here, times loadings within 1e-7).
 */
class EigenmillExampleTest extends SparkSuite {

  @Test
  void fitsUsArrestsAsR() {
    Dataset<Row> arrests = spark.read().option("header", "true").option("inferSchema", "true")
        .csv(Datasets.csv("usarrests").toString());
    JobResult fit = Eigenmill.fit(spark, arrests, "features.keys = [state]\nprepare.scaling = standardize\n"
        + "reduce.components = 2");
    // R 4.2.2 prcomp(USArrests, scale. = TRUE), shared datasets' usarrests.reference.json: eigenvalues (sdev^2)
    assertArrayEquals(new double[] {2.4802415791, 0.9897651525, 0.3565631806, 0.1734300877}, fit.eigenvalues(), 1e-8);
    // same source: first loading vector (rotation[, 1], sign convention of the datasets' README)
    assertArrayEquals(new double[] {0.5358994749, 0.5831836349, 0.2781908746, 0.5434320914},
        fit.model().loadings()[0], 1e-7);
    // same source: scores of the first three states on PC1 and PC2 (x[1:3, 1:2])
    Dataset<Row> scores = fit.scores().select("state", "pc_1", "pc_2").limit(3);
    frames().assertDataFrameApproximateEquals(spark.createDataFrame(List.of(
        RowFactory.create("Alabama", 0.9756604483, -1.1220012104), RowFactory.create("Alaska", 1.9305378785,
        -1.0624269195), RowFactory.create("Arizona", 1.7454428534, 0.7384595373)), scores.schema()), scores, 1e-6);
  }
}
