package io.eigenmill.io;

import io.eigenmill.engine.KeyValues;
import java.util.List;
import java.util.Map;

/**
 * The models of a grouped fit as stored in {@code model/}: the group columns with their types, and each group's
 * model by its key (the group values as text, null elements for null values).
 */
public record GroupModels(List<String> columns, List<String> types, Map<KeyValues, PcaModel> models) {

  /** The union of the models' features, in the order they first appear (the columns a grouped scoring reads). */
  public static List<String> features(Map<KeyValues, PcaModel> models) {
    java.util.Set<String> all = new java.util.LinkedHashSet<>();
    for (PcaModel m : models.values()) {
      all.addAll(m.features());
    }
    return new java.util.ArrayList<>(all);
  }

  /** The types of {@link #features}, from the first model that has each. */
  public static List<String> featureTypes(Map<KeyValues, PcaModel> models) {
    Map<String, String> types = new java.util.HashMap<>();
    for (PcaModel m : models.values()) {
      for (int j = 0; j < m.d(); j++) {
        types.putIfAbsent(m.features().get(j), m.featureTypes().get(j));
      }
    }
    List<String> out = new java.util.ArrayList<>();
    for (String f : features(models)) {
      out.add(types.get(f));
    }
    return out;
  }
}
