package io.eigenmill.io;

import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.InvalidJobException;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import scala.collection.JavaConverters;

/**
 * Writes and reads the {@code model/} table: one Parquet row holding a {@link PcaModel}. Loadings are stored
 * component by component (an array of k arrays of d loadings).
 */
public final class ModelStore {
  private ModelStore() {}

  static final StructType SCHEMA = new StructType()
      .add("format_version", DataTypes.IntegerType, false)
      .add("product_version", DataTypes.StringType, false)
      .add("features", DataTypes.createArrayType(DataTypes.StringType), false)
      .add("feature_types", DataTypes.createArrayType(DataTypes.StringType), false)
      .add("scaling", DataTypes.StringType, false)
      .add("method", DataTypes.StringType, false)
      .add("rows", DataTypes.LongType, false)
      .add("means", DataTypes.createArrayType(DataTypes.DoubleType), false)
      .add("scales", DataTypes.createArrayType(DataTypes.DoubleType), false)
      .add("k", DataTypes.IntegerType, false)
      .add("loadings", DataTypes.createArrayType(DataTypes.createArrayType(DataTypes.DoubleType)), false)
      .add("eigenvalues", DataTypes.createArrayType(DataTypes.DoubleType), false)
      .add("eigenvalues_complete", DataTypes.BooleanType, false)
      .add("total_variance", DataTypes.DoubleType, false)
      .add("schema_fingerprint", DataTypes.StringType, false)
      .add("sds", DataTypes.createArrayType(DataTypes.DoubleType), false);

  /** The columns of {@code components/}: a loading per feature and component. */
  public static final StructType COMPONENTS = new StructType().add("feature", DataTypes.StringType, false)
      .add("component", DataTypes.IntegerType, false).add("loading", DataTypes.DoubleType, false);

  /** The columns of {@code spectrum/}: an eigenvalue per component, its shares, and whether it is kept. */
  public static final StructType SPECTRUM = new StructType().add("component", DataTypes.IntegerType, false)
      .add("eigenvalue", DataTypes.DoubleType, false).add("variance_share", DataTypes.DoubleType, false)
      .add("cumulative_variance_share", DataTypes.DoubleType, false).add("kept", DataTypes.BooleanType, false);

  /**
   * The names of the columns of {@code model/}, {@code components/} and {@code spectrum/}, which a fit with groups
   * writes after the group columns: a group column cannot have one of them (Spark's names match without regard to
   * case).
   */
  public static java.util.Set<String> groupTableColumns() {
    java.util.Set<String> names = new java.util.TreeSet<>();
    for (StructType t : List.of(SCHEMA, COMPONENTS, SPECTRUM)) {
      names.addAll(List.of(t.fieldNames()));
    }
    return names;
  }

  public static void write(SparkSession spark, PcaModel m, String path) {
    DriverTables.write(spark, SCHEMA, List.of(RowFactory.create(fields(m))), path);
  }

  /** The values of a model's row, in the order of {@link #SCHEMA}. */
  private static Object[] fields(PcaModel m) {
    List<double[]> columns = new ArrayList<>();
    for (int c = 0; c < m.k(); c++) {
      double[] col = new double[m.d()];
      for (int j = 0; j < m.d(); j++) {
        col[j] = m.loading(j, c);
      }
      columns.add(col);
    }
    return new Object[] {m.formatVersion(), m.productVersion(), m.features().toArray(new String[0]),
        m.featureTypes().toArray(new String[0]), m.scaling(), m.method().word(), m.rows(), m.means(), m.scales(),
        m.k(), columns.toArray(new double[0][]), m.eigenvalues(), m.eigenvaluesComplete(), m.totalVariance(),
        m.schemaFingerprint(), m.sds()};
  }

  /**
   * Reads a model from {@code path}: a {@code model/} folder or a fit's output folder holding one. {@code key} names
   * the setting the path came from, for error messages.
   */
  public static PcaModel read(SparkSession spark, String key, String path) {
    Dataset<Row> table = table(spark, key, path);
    List<String> groups = groupColumns(table);
    if (!groups.isEmpty() && List.of(table.schema().fieldNames()).contains("format_version")) {
      throw new InvalidJobException(key + " = " + path + ": a model with groups (one model per value of "
          + String.join(", ", groups) + "); " + key + " takes one model: use the fit's pooled-model/ folder"
          + " (the model of all its rows)" + (key.equals("apply.model") ? "" : ", or apply the groups' models with"
          + " apply.model"));
    }
    List<Row> rows;
    try {
      rows = table.collectAsList();
    } catch (RuntimeException e) {
      throw new InvalidJobException(key + " = " + path + ": not a readable model: " + TableLoader.firstLine(e));
    }
    if (rows.size() != 1 || !List.of(table.schema().fieldNames()).contains("format_version")) {
      throw new InvalidJobException(key + " = " + path + ": not an eigenmill model (expected one row with"
          + " format_version, found " + rows.size() + " rows)");
    }
    return parse(key, path, rows.get(0), List.of(table.schema().fieldNames()));
  }

  /** Whether the model table at {@code path} holds one model per group ({@link #writeGroups}). */
  public static boolean grouped(SparkSession spark, String key, String path) {
    return !groupColumns(table(spark, key, path)).isEmpty();
  }

  /**
   * Writes one model per group: the group columns first (with the types they have in the input: their text cast
   * back), then the columns of a single model.
   */
  public static void writeGroups(SparkSession spark, KeyColumns by, Map<KeyValues, PcaModel> models, String path) {
    DriverTables.write(spark, groupTable(spark, by, models), path);
  }

  /**
   * The table {@link #writeGroups} writes, one row per group: the group columns (typed), then a model's columns. The
   * groups' other tables (their loadings and spectra) are exploded from it by Spark rather than built row by row.
   */
  public static Dataset<Row> groupTable(SparkSession spark, KeyColumns by, Map<KeyValues, PcaModel> models) {
    StructType schema = new StructType();
    for (String c : by.names()) {
      schema = schema.add(c, DataTypes.StringType, true);
    }
    for (var f : SCHEMA.fields()) {
      schema = schema.add(f);
    }
    List<Row> rows = new ArrayList<>();
    models.forEach((key, m) -> {
      List<Object> values = new ArrayList<>(key.texts());
      values.addAll(List.of(fields(m)));
      rows.add(RowFactory.create(values.toArray()));
    });
    return spark.createDataFrame(rows, schema).select(typed(by));
  }

  /** The columns: the group columns cast to their types, then every other column as it is. */
  public static Column[] typed(KeyColumns by) {
    return typed(by, SCHEMA.fieldNames());
  }

  /** The group columns cast to their types, then the columns {@code rest}. */
  public static Column[] typed(KeyColumns by, String[] rest) {
    List<Column> cols = new ArrayList<>();
    for (int i = 0; i < by.size(); i++) {
      cols.add(functions.col(by.names().get(i)).cast(by.types().get(i)).as(by.names().get(i)));
    }
    for (String f : rest) {
      cols.add(functions.col(f));
    }
    return cols.toArray(Column[]::new);
  }

  /**
   * Reads a model table with groups: the group columns (names and types) and each group's model by its key (the
   * group values as text). An empty table (no group had a model) gives no models.
   */
  public static GroupModels readGroups(SparkSession spark, String key, String path) {
    Dataset<Row> table = table(spark, key, path);
    List<String> groups = groupColumns(table);
    if (groups.isEmpty()) {
      throw new InvalidJobException(key + " = " + path + ": a model without groups");
    }
    List<String> types = new ArrayList<>();
    List<Column> cols = new ArrayList<>();
    for (String g : groups) {
      types.add(table.schema().apply(g).dataType().simpleString());
      cols.add(functions.col(g).cast("string").as(g));
    }
    for (String f : SCHEMA.fieldNames()) {
      cols.add(functions.col(f));
    }
    Dataset<Row> texts = table.select(cols.toArray(Column[]::new));
    List<String> present = List.of(texts.schema().fieldNames());
    Map<KeyValues, PcaModel> models = new java.util.LinkedHashMap<>();
    for (Row r : texts.collectAsList()) {
      List<String> values = new ArrayList<>();
      for (int i = 0; i < groups.size(); i++) {
        values.add(r.isNullAt(i) ? null : r.getString(i));
      }
      models.put(new KeyValues(values), parse(key, path, r, present));
    }
    return new GroupModels(groups, types, models);
  }

  private static Dataset<Row> table(SparkSession spark, String key, String path) {
    String modelPath = TableLoader.exists(spark, path + "/model") ? path + "/model" : path;
    TableLoader.requireExists(spark, key, modelPath);
    try {
      return spark.read().parquet(modelPath);
    } catch (RuntimeException e) {
      throw new InvalidJobException(key + " = " + path + ": not a readable model: " + TableLoader.firstLine(e));
    }
  }

  /** The columns of a model table that are not a model's: the group columns of a grouped model, in order. */
  private static List<String> groupColumns(Dataset<Row> table) {
    List<String> known = List.of(SCHEMA.fieldNames());
    List<String> out = new ArrayList<>();
    if (!List.of(table.schema().fieldNames()).contains("format_version")) {
      return out;
    }
    for (String f : table.schema().fieldNames()) {
      if (!known.contains(f)) {
        out.add(f);
      }
    }
    return out;
  }

  private static PcaModel parse(String key, String path, Row r, List<String> present) {
    for (String field : SCHEMA.fieldNames()) {
      if (!present.contains(field)) {
        throw new InvalidJobException(key + " = " + path + ": the model lacks the field " + field
            + " (written by an incompatible version " + (present.contains("product_version")
                ? r.getString(r.fieldIndex("product_version")) : "unknown") + "); refit the model");
      }
    }
    int format = r.getInt(r.fieldIndex("format_version"));
    String writer = r.getString(r.fieldIndex("product_version"));
    if (format > PcaModel.FORMAT_VERSION) {
      throw new InvalidJobException(key + " = " + path + ": model format " + format + " (written by eigenmill "
          + writer + ") is newer than this version reads (" + PcaModel.FORMAT_VERSION + "); use eigenmill "
          + writer + " or later, or refit the model");
    }
    List<double[]> cols = new ArrayList<>();
    for (Object c : r.getList(r.fieldIndex("loadings"))) {
      cols.add(toDoubles(JavaConverters.seqAsJavaList((scala.collection.Seq<?>) c)));
    }
    List<String> features = r.getList(r.fieldIndex("features"));
    int d = features.size();
    int k = r.getInt(r.fieldIndex("k"));
    double[] loadings = new double[d * k];
    for (int c = 0; c < k; c++) {
      System.arraycopy(cols.get(c), 0, loadings, c * d, d);
    }
    return new PcaModel(format, writer, List.copyOf(features), List.copyOf(r.getList(r.fieldIndex("feature_types"))),
        r.getString(r.fieldIndex("scaling")), method(key, path, r.getString(r.fieldIndex("method"))),
        r.getLong(r.fieldIndex("rows")),
        toDoubles(r.getList(r.fieldIndex("means"))), toDoubles(r.getList(r.fieldIndex("scales"))), k, loadings,
        toDoubles(r.getList(r.fieldIndex("eigenvalues"))), r.getBoolean(r.fieldIndex("eigenvalues_complete")),
        r.getDouble(r.fieldIndex("total_variance")), r.getString(r.fieldIndex("schema_fingerprint")),
        toDoubles(r.getList(r.fieldIndex("sds"))));
  }

  /**
   * Where the model table of {@code path} is ({@code path/model} when that exists, else {@code path}), as a fully
   * qualified path with {@code .} and {@code ..} resolved and no trailing slash: two spellings of one folder give
   * the same text.
   */
  public static String location(SparkSession spark, String path) {
    String modelPath = TableLoader.exists(spark, path + "/model") ? path + "/model" : path;
    try {
      org.apache.hadoop.fs.Path p = new org.apache.hadoop.fs.Path(modelPath);
      return p.getFileSystem(spark.sparkContext().hadoopConfiguration()).makeQualified(p).toString();
    } catch (java.io.IOException | IllegalArgumentException e) {
      return modelPath;
    }
  }

  /** The fitted method of a stored model, from its word; {@code auto} is never stored (a fit records its choice). */
  private static Method method(String key, String path, String word) {
    for (Method m : Method.values()) {
      if (m != Method.AUTO && m.word().equals(word)) {
        return m;
      }
    }
    throw new InvalidJobException(key + " = " + path + ": the model's method is '" + word + "', which this version"
        + " does not know (expected covariance, tsqr or randomized); refit the model");
  }

  private static double[] toDoubles(List<?> values) {
    double[] out = new double[values.size()];
    for (int i = 0; i < out.length; i++) {
      out[i] = ((Number) values.get(i)).doubleValue();
    }
    return out;
  }
}
