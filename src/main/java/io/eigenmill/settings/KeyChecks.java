package io.eigenmill.settings;

import com.typesafe.config.Config;
import com.typesafe.config.ConfigException;
import com.typesafe.config.ConfigValue;
import com.typesafe.config.ConfigValueType;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.stream.Collectors;

/**
 * The checks of the keys the user wrote, against the reference ({@code reference.conf}): unknown keys with a "did
 * you mean" hint (edit distance to every known key: cost keys x length^2, a few milliseconds), {@code cluster.*}
 * keys while clustering is off, and fit-only keys in an apply job. Problems and warnings are collected, never
 * thrown; each names the file and line, the key, the value and the rule.
 */
final class KeyChecks {
  private static final String FREE_FORM = SettingsReader.FREE_FORM;

  private final Config reference;

  KeyChecks(Config reference) {
    this.reference = reference;
  }

  /**
   * {@code cluster.*} keys given by the user (job file, profile or {@code --set}; not defaults) while clustering is
   * off have no effect. With {@code cluster.enabled} left at its default this is surely a mistake (the user wrote
   * clustering settings and got no clustering): a problem. With {@code cluster.enabled = false} set by the user it
   * is a deliberate switch (e.g. {@code --set cluster.enabled=false} for one run of a job file that clusters): a
   * warning.
   */
  void checkClusterKeys(Config user, Config merged, String source, List<String> problems,
      List<String> warnings) {
    boolean enabled;
    try {
      enabled = merged.getBoolean("cluster.enabled");
    } catch (ConfigException e) {
      return; // reported by the reader of cluster.enabled
    }
    List<Map.Entry<String, ConfigValue>> set = userKeys(user, path -> path.startsWith("cluster.")
        && !path.equals("cluster.enabled"));
    if (enabled || set.isEmpty()) {
      return;
    }
    String keys = rendered(set);
    if (user.hasPath("cluster.enabled")) {
      warnings.add(SettingsReader.where(source, set.get(0).getValue().origin()) + keys + ": ignored, because cluster.enabled = false ("
          + SettingsReader.where(source, user.getValue("cluster.enabled").origin()).replaceFirst(": $", "")
          + "); set cluster.enabled = true to cluster, or remove " + (set.size() > 1 ? "these keys" : "the key"));
    } else {
      problems.add(SettingsReader.where(source, set.get(0).getValue().origin()) + keys + ": has no effect while cluster.enabled is"
          + " false (its default): no clustering would run; set cluster.enabled = true to cluster, or remove "
          + (set.size() > 1 ? "these keys" : "the key"));
    }
  }

  /**
   * Keys that only a fit reads, given by the user in an apply job ({@code apply.model} set): the model's
   * preparation (its means and scales) and its components are used, so {@code prepare.scaling} and the
   * {@code reduce.*} keys other than {@code reduce.block-rows} (the scoring pass's block size) are ignored: a
   * warning. {@code prepare.missing} applies to the scored rows and is not among them.
   */
  void checkFitOnlyKeys(Config user, Config merged, String source, List<String> warnings) {
    String model;
    try {
      model = merged.getString("apply.model");
    } catch (ConfigException e) {
      return; // reported by the reader of apply.model
    }
    if (model.isBlank()) {
      return;
    }
    List<Map.Entry<String, ConfigValue>> set = userKeys(user, path -> path.equals("prepare.scaling")
        || path.startsWith("reduce.") && !path.equals("reduce.block-rows"));
    if (!set.isEmpty()) {
      warnings.add(SettingsReader.where(source, set.get(0).getValue().origin()) + rendered(set) + ": ignored in an apply job"
          + " (apply.model is set): the model's preparation (its means and scaling, as fitted) and its components"
          + " are used; remove " + (set.size() > 1 ? "these keys" : "the key") + " (prepare.missing still applies"
          + " to the scored rows)");
    }
  }

  /** The known keys the user set (not defaults, not null) whose path passes {@code test}, sorted by path. */
  private List<Map.Entry<String, ConfigValue>> userKeys(Config user, java.util.function.Predicate<String> test) {
    List<Map.Entry<String, ConfigValue>> out = new ArrayList<>();
    for (Map.Entry<String, ConfigValue> e : sortedEntries(user)) {
      if (test.test(e.getKey()) && reference.hasPathOrNull(e.getKey())) {
        out.add(e);
      }
    }
    return out;
  }

  private static String rendered(List<Map.Entry<String, ConfigValue>> entries) {
    return entries.stream().map(e -> e.getKey() + " = " + e.getValue().render(
        com.typesafe.config.ConfigRenderOptions.concise())).collect(Collectors.joining(", "));
  }

  void checkUnknownKeys(Config user, String source, List<String> problems) {
    List<String> known = leafPaths(reference);
    for (Map.Entry<String, ConfigValue> e : sortedEntries(user)) {
      String path = e.getKey();
      if (path.equals(FREE_FORM) || path.startsWith(FREE_FORM + ".")) {
        continue;
      }
      if (reference.hasPathOrNull(path)) {
        continue;
      }
      String hint = closest(path, known);
      problems.add(SettingsReader.where(source, e.getValue().origin()) + path + ": unknown key"
          + (hint == null ? "" : " (did you mean " + hint + "?)"));
    }
  }

  static List<Map.Entry<String, ConfigValue>> sortedEntries(Config config) {
    List<Map.Entry<String, ConfigValue>> entries = new ArrayList<>(config.entrySet());
    entries.sort(Map.Entry.comparingByKey());
    return entries;
  }

  private static List<String> leafPaths(Config config) {
    List<String> paths = new ArrayList<>();
    collectLeaves(config.root(), "", paths);
    return paths;
  }

  private static void collectLeaves(com.typesafe.config.ConfigObject obj, String prefix, List<String> out) {
    for (Map.Entry<String, ConfigValue> e : obj.entrySet()) {
      String path = prefix.isEmpty() ? e.getKey() : prefix + "." + e.getKey();
      if (e.getValue().valueType() == ConfigValueType.OBJECT && !path.equals(FREE_FORM)) {
        collectLeaves((com.typesafe.config.ConfigObject) e.getValue(), path, out);
      } else {
        out.add(path);
      }
    }
  }

  /** The known key nearest to {@code path} by edit distance, or null when none is plausibly meant. */
  static String closest(String path, List<String> known) {
    String best = null;
    int bestDistance = Integer.MAX_VALUE;
    String last = path.substring(path.lastIndexOf('.') + 1);
    for (String candidate : known) {
      int d = Math.min(editDistance(path, candidate),
          editDistance(last, candidate.substring(candidate.lastIndexOf('.') + 1)) + 1);
      if (d < bestDistance) {
        bestDistance = d;
        best = candidate;
      }
    }
    return bestDistance <= Math.max(2, path.length() / 3) ? best : null;
  }

  static int editDistance(String a, String b) {
    int[] prev = new int[b.length() + 1];
    int[] cur = new int[b.length() + 1];
    for (int j = 0; j <= b.length(); j++) {
      prev[j] = j;
    }
    for (int i = 1; i <= a.length(); i++) {
      cur[0] = i;
      for (int j = 1; j <= b.length(); j++) {
        int cost = a.charAt(i - 1) == b.charAt(j - 1) ? 0 : 1;
        cur[j] = Math.min(Math.min(cur[j - 1] + 1, prev[j] + 1), prev[j - 1] + cost);
      }
      int[] t = prev;
      prev = cur;
      cur = t;
    }
    return prev[b.length()];
  }
}
