package io.eigenmill.cli;

import java.util.ArrayList;
import java.util.Collection;
import java.util.Comparator;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Pattern;

/**
 * Keeps credentials out of everything eigenmill prints or writes. A key is secret when its name contains, ignoring
 * case, password (or passwd), secret, token, credential, access key, private key or account key, with or without a
 * separator ({@code .}, {@code -}, {@code _} or a space) inside the two-word forms: {@code
 * spark.hadoop.fs.s3a.secret.key}, {@code fs.s3a.access.key}, {@code fs.azure.account.key.NAME}, {@code
 * privateKey}, {@code api-token}. The same rule is handed to Spark as {@code spark.redaction.regex}, so Spark's own
 * UI, event log and verbose output hide the same keys.
 */
public final class Redaction {
  /** What a secret value is replaced with. */
  public static final String MASK = "*********(redacted)";

  /** The rule as a regular expression on key names (also Spark's {@code spark.redaction.regex}). */
  public static final String KEY_REGEX =
      "(?i)passw(or)?d|secret|token|credential|access[._ -]?key|private[._ -]?key|account[._ -]?key";

  /**
   * Values shorter than this are not searched for in free text by {@link #scrub}: masking every "1" or "on" in a
   * message would garble it, and so short a value protects nothing. Such values are still masked by {@link #redact}.
   */
  static final int MIN_SCRUBBED_LENGTH = 4;

  private static final Pattern SECRET_KEY = Pattern.compile(KEY_REGEX);

  private Redaction() {}

  /** True when {@code key} names a credential (see the class comment for the rule). */
  public static boolean isSecret(String key) {
    return key != null && SECRET_KEY.matcher(key).find();
  }

  /** A copy of {@code settings}, in the same order, with the value of every secret key replaced by {@link #MASK}. */
  public static Map<String, String> redact(Map<String, String> settings) {
    Map<String, String> out = new LinkedHashMap<>();
    for (Map.Entry<String, String> e : settings.entrySet()) {
      out.put(e.getKey(), isSecret(e.getKey()) ? MASK : e.getValue());
    }
    return out;
  }

  /** The values of the secret keys of {@code settings}. */
  public static Set<String> secretValues(Map<String, String> settings) {
    Set<String> out = new LinkedHashSet<>();
    for (Map.Entry<String, String> e : settings.entrySet()) {
      if (isSecret(e.getKey()) && e.getValue() != null) {
        out.add(e.getValue());
      }
    }
    return out;
  }

  /**
   * The values of secret keys among {@code --set key=value} arguments, as typed and unquoted: the key may be a quoted
   * HOCON path ({@code spark.conf."spark.hadoop.fs.s3a.secret.key"}), the value may be quoted.
   */
  public static Set<String> secretValuesOfSets(List<String> sets) {
    Set<String> out = new LinkedHashSet<>();
    for (String set : sets) {
      int eq = set.indexOf('=');
      if (eq <= 0 || !isSecret(set.substring(0, eq))) {
        continue;
      }
      String value = set.substring(eq + 1).trim();
      out.add(value);
      if (value.length() >= 2 && value.startsWith("\"") && value.endsWith("\"")) {
        out.add(value.substring(1, value.length() - 1));
      }
    }
    return out;
  }

  /**
   * {@code text} with every occurrence of each of {@code secrets} (of at least {@link #MIN_SCRUBBED_LENGTH}
   * characters) replaced by {@link #MASK}; longer values first, so that a secret containing another is masked whole.
   */
  public static String scrub(String text, Collection<String> secrets) {
    if (text == null || secrets.isEmpty()) {
      return text;
    }
    List<String> values = new ArrayList<>();
    for (String s : secrets) {
      if (s != null && s.length() >= MIN_SCRUBBED_LENGTH) {
        values.add(s);
      }
    }
    values.sort(Comparator.comparingInt(String::length).reversed());
    String out = text;
    for (String v : values) {
      out = out.replace(v, MASK);
    }
    return out;
  }
}
