package io.eigenmill.pca;

import io.eigenmill.io.ModelStore;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.pca.math.Spectrum;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;

/** Writes the fit's small tables: {@code components/} (feature, component, loading) and {@code spectrum/}. */
public final class FitTables {
  private FitTables() {}

  public static void write(SparkSession spark, FitResult fit, OutputCommit out) {
    Spectrum s = fit.spectrum();
    List<String> features = fit.model().features();
    List<Row> loadings = new ArrayList<>();
    for (int c = 0; c < fit.model().k(); c++) {
      for (int j = 0; j < features.size(); j++) {
        loadings.add(RowFactory.create(features.get(j), c + 1, s.loading(j, c)));
      }
    }
    StructType componentSchema = new StructType().add("feature", DataTypes.StringType, false)
        .add("component", DataTypes.IntegerType, false).add("loading", DataTypes.DoubleType, false);
    spark.createDataFrame(loadings, componentSchema).coalesce(1).write().parquet(out.staged("components"));
    double[] shares = s.varianceShares();
    double[] cumulative = s.cumulativeVarianceShares();
    List<Row> spectrum = new ArrayList<>();
    for (int c = 0; c < s.available(); c++) {
      spectrum.add(RowFactory.create(c + 1, s.eigenvalues()[c], shares[c], cumulative[c], c < fit.model().k()));
    }
    StructType spectrumSchema = new StructType().add("component", DataTypes.IntegerType, false)
        .add("eigenvalue", DataTypes.DoubleType, false).add("variance_share", DataTypes.DoubleType, false)
        .add("cumulative_variance_share", DataTypes.DoubleType, false).add("kept", DataTypes.BooleanType, false);
    spark.createDataFrame(spectrum, spectrumSchema).coalesce(1).write().parquet(out.staged("spectrum"));
    ModelStore.write(spark, fit.model(), out.staged("model"));
  }
}
