package io.eigenmill.engine;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;

/**
 * The values of a row's key columns (a time window's key, a group, or both) as Spark's cast-to-string text, a null
 * element for a null value. Texts, not objects, because keys travel to snapshot files, summaries and reports, and
 * come back into tables by a cast to the column's type; for every key type {@link KeyColumns} accepts, the text of a
 * value casts back to the same value.
 */
public record KeyValues(List<String> texts) implements Serializable {
  public KeyValues {
    texts = Collections.unmodifiableList(new ArrayList<>(texts));
  }

  public static KeyValues of(String... texts) {
    List<String> l = new ArrayList<>();
    Collections.addAll(l, texts);
    return new KeyValues(l);
  }

  public int size() {
    return texts.size();
  }

  public String get(int i) {
    return texts.get(i);
  }

  /** The values from position {@code from} (inclusive) to {@code to} (exclusive). */
  public KeyValues slice(int from, int to) {
    return new KeyValues(texts.subList(from, to));
  }

  /** {@code col=value} pairs joined by ", " (a null value shown as {@code null}). */
  public String display(List<String> columns) {
    StringBuilder b = new StringBuilder();
    for (int i = 0; i < texts.size(); i++) {
      b.append(i == 0 ? "" : ", ").append(columns.get(i)).append('=').append(texts.get(i) == null ? "null"
          : texts.get(i));
    }
    return b.toString();
  }
}
