package io.eigenmill.pca;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.io.ModelStore;
import io.eigenmill.io.PcaModel;
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

  /**
   * Writes the tables of a grouped fit: {@code model/} (one row per group with a model, the group columns first),
   * {@code pooled-model/} (the model of all rows, as a fit without groups writes it), and {@code components/} and
   * {@code spectrum/} with the group columns first.
   */
  static void writeGroups(SparkSession spark, FitResult fit, OutputCommit out) {
    Groups g = fit.groups();
    KeyColumns by = g.by();
    StructType componentSchema = new StructType();
    StructType spectrumSchema = new StructType();
    for (String c : by.names()) {
      componentSchema = componentSchema.add(c, DataTypes.StringType, true);
      spectrumSchema = spectrumSchema.add(c, DataTypes.StringType, true);
    }
    componentSchema = componentSchema.add("feature", DataTypes.StringType, false)
        .add("component", DataTypes.IntegerType, false).add("loading", DataTypes.DoubleType, false);
    spectrumSchema = spectrumSchema.add("component", DataTypes.IntegerType, false)
        .add("eigenvalue", DataTypes.DoubleType, false).add("variance_share", DataTypes.DoubleType, false)
        .add("cumulative_variance_share", DataTypes.DoubleType, false).add("kept", DataTypes.BooleanType, false);
    List<Row> loadings = new ArrayList<>();
    List<Row> spectrum = new ArrayList<>();
    for (GroupFit group : g.groups()) {
      if (!group.hasModel()) {
        continue;
      }
      PcaModel m = group.solved().model();
      Spectrum s = group.solved().spectrum();
      for (int c = 0; c < m.k(); c++) {
        for (int j = 0; j < m.d(); j++) {
          loadings.add(row(group.key(), m.features().get(j), c + 1, s.loading(j, c)));
        }
      }
      double[] shares = s.varianceShares();
      double[] cumulative = s.cumulativeVarianceShares();
      for (int c = 0; c < s.available(); c++) {
        spectrum.add(row(group.key(), c + 1, s.eigenvalues()[c], shares[c], cumulative[c], c < m.k()));
      }
    }
    spark.createDataFrame(loadings, componentSchema).select(ModelStore.typed(by, new String[] {"feature",
        "component", "loading"})).coalesce(1).write().parquet(out.staged("components"));
    spark.createDataFrame(spectrum, spectrumSchema).select(ModelStore.typed(by, new String[] {"component",
        "eigenvalue", "variance_share", "cumulative_variance_share", "kept"})).coalesce(1).write()
        .parquet(out.staged("spectrum"));
    ModelStore.writeGroups(spark, by, g.models(), out.staged("model"));
    ModelStore.write(spark, fit.model(), out.staged("pooled-model"));
  }

  private static Row row(KeyValues key, Object... values) {
    List<Object> all = new ArrayList<>(key.texts());
    all.addAll(java.util.Arrays.asList(values));
    return RowFactory.create(all.toArray());
  }

  public static void write(SparkSession spark, FitResult fit, OutputCommit out) {
    if (fit.groups() != null) {
      writeGroups(spark, fit, out);
      return;
    }
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
