package io.eigenmill.io;

import io.eigenmill.engine.KeyValues;
import java.util.List;
import java.util.Map;

/**
 * The models of a grouped fit as stored in {@code model/}: the group columns with their types, and each group's
 * model by its key (the group values as text, null elements for null values).
 */
public record GroupModels(List<String> columns, List<String> types, Map<KeyValues, PcaModel> models) {}
