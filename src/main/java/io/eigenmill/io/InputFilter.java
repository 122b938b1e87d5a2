package io.eigenmill.io;

import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.Map;
import org.apache.spark.SparkThrowable;
import org.apache.spark.sql.AnalysisException;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.BooleanType;
import org.apache.spark.sql.types.DataType;

/**
 * The row filter {@code input.where}: a Spark SQL predicate applied to the table as read, as {@code Dataset.filter},
 * so that Spark prunes partition folders (partition columns) and pushes Parquet filters (data columns) into the scan.
 * Every check here parses and analyses the predicate against the table's schema: no data is read.
 */
public final class InputFilter {
  static final String KEY = "input.where";

  private InputFilter() {}

  /** {@code table} filtered by {@code input.where}, or {@code table} itself when it is unset; throws its problem. */
  public static Dataset<Row> apply(Dataset<Row> table, JobSettings.Input input) {
    if (!input.filtered()) {
      return table;
    }
    String problem = problem(table, input.where());
    if (problem != null) {
      throw new InvalidJobException(problem);
    }
    return table.filter(functions.expr(input.where()));
  }

  /**
   * The problem with {@code where} over {@code table}'s columns, naming the setting, the value and the rule, or null
   * when it is a boolean predicate Spark can apply. Parsing and analysis only (cost: one planning of the filter).
   */
  public static String problem(Dataset<Row> table, String where) {
    String shown = KEY + " = \"" + where + "\": ";
    Column predicate;
    try {
      predicate = functions.expr(where);
    } catch (Exception e) { // the parser's ParseException (an AnalysisException, checked in Java's eyes)
      return shown + "not a Spark SQL expression: " + firstLine(e);
    }
    DataType type;
    try {
      type = table.select(predicate).schema().fields()[0].dataType();
    } catch (Exception e) {
      if (isParseError(e)) { // Spark 4 parses a column's expression when it is first used, not when it is made
        return shown + "not a Spark SQL expression: " + firstLine(e);
      }
      return shown + analysisProblem(table, e);
    }
    if (!(type instanceof BooleanType)) {
      return shown + "the expression has type " + type.simpleString() + "; " + KEY
          + " must be a boolean predicate (the rows where it is true are kept)";
    }
    try {
      table.filter(predicate).queryExecution().assertAnalyzed();
    } catch (Exception e) { // an aggregate or window function, which a row filter cannot hold
      return shown + "not a row predicate: " + firstLine(e);
    }
    return null;
  }

  /** A column the predicate names that the input lacks, named with the input's columns; else Spark's first line. */
  private static String analysisProblem(Dataset<Row> table, Exception e) {
    if (e instanceof AnalysisException a && a.getErrorClass() != null
        && a.getErrorClass().startsWith("UNRESOLVED_COLUMN")) {
      Map<String, String> parameters = a.getMessageParameters();
      String column = parameters.getOrDefault("objectName", "?").replace("`", "");
      return "column " + column + " is not in the input (columns: " + String.join(", ", table.columns())
          + "); the predicate may name only the input's columns";
    }
    return "not a predicate over the input's columns: " + firstLine(e);
  }

  /**
   * Whether {@code e} is Spark's parser rejecting the text (error class {@code PARSE_...}). Spark 3.5 throws it
   * from {@code functions.expr}, Spark 4 when the column is first used in a plan.
   */
  static boolean isParseError(Throwable e) {
    return e instanceof SparkThrowable t && t.getErrorClass() != null && t.getErrorClass().startsWith("PARSE_");
  }

  /** The first line of the message that is not blank (Spark's parser starts its message with a newline). */
  static String firstLine(Throwable e) {
    for (String line : String.valueOf(e.getMessage()).split("\n")) {
      if (!line.isBlank()) {
        return line.strip();
      }
    }
    return e.getClass().getSimpleName();
  }
}
