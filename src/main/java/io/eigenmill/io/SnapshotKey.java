package io.eigenmill.io;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;

/**
 * The key of one snapshot: the key columns in order, their Spark SQL type names ({@code DataType.simpleString()},
 * e.g. "date", "string", "int"), and each value as Spark's cast-to-string text, or null for a null value. Equal by
 * value (columns, types and values).
 */
public record SnapshotKey(List<String> columns, List<String> types, List<String> values) implements Serializable {
  public SnapshotKey {
    columns = List.copyOf(columns);
    types = List.copyOf(types);
    values = Collections.unmodifiableList(new ArrayList<>(values)); // null elements allowed
    if (columns.isEmpty()) {
      throw new IllegalArgumentException("a snapshot key needs at least one key column");
    }
    if (types.size() != columns.size() || values.size() != columns.size()) {
      throw new IllegalArgumentException("a snapshot key needs one type and one value per column: " + columns
          + " " + types + " " + values);
    }
  }

  /** A key of one column. */
  public static SnapshotKey of(String column, String type, String value) {
    return new SnapshotKey(List.of(column), List.of(type), Collections.singletonList(value));
  }

  /** {@code col=value} pairs joined by ", " (a null value shown as "null"), e.g. "date=2026-11-01, region=eu". */
  public String display() {
    StringBuilder b = new StringBuilder();
    for (int i = 0; i < columns.size(); i++) {
      if (i > 0) {
        b.append(", ");
      }
      b.append(columns.get(i)).append('=').append(values.get(i) == null ? "null" : values.get(i));
    }
    return b.toString();
  }

  /** The key columns with their types, e.g. "date date, region string". */
  public String layout() {
    StringBuilder b = new StringBuilder();
    for (int i = 0; i < columns.size(); i++) {
      if (i > 0) {
        b.append(", ");
      }
      b.append(columns.get(i)).append(' ').append(types.get(i));
    }
    return b.toString();
  }

  @Override
  public String toString() {
    return display();
  }
}
