package io.eigenmill.report;

import java.util.List;

/** One labelled value of the report, already formatted for display. */
public record Fact(String label, String value) {

  /** The value of the first fact labelled {@code label} in {@code facts}, or null. */
  public static String find(List<Fact> facts, String label) {
    for (Fact f : facts) {
      if (f.label().equals(label)) {
        return f.value();
      }
    }
    return null;
  }
}
