package io.eigenmill.engine;

import java.util.LinkedHashMap;
import java.util.Map;
import java.util.function.Supplier;
import org.apache.spark.sql.RuntimeConfig;

/**
 * Session settings changed for one piece of work only: set, the work run, and the session's own values restored
 * (a setting the session did not have is unset again), whether the work ends or throws.
 */
public final class SessionSettings {
  private SessionSettings() {}

  /** Runs {@code body} with {@code settings} set in {@code conf}, then restores the values the session had. */
  public static <T> T with(RuntimeConfig conf, Map<String, String> settings, Supplier<T> body) {
    Map<String, String> before = new LinkedHashMap<>();
    for (String key : settings.keySet()) {
      before.put(key, conf.contains(key) ? conf.get(key) : null);
      conf.set(key, settings.get(key));
    }
    try {
      return body.get();
    } finally {
      before.forEach((key, value) -> {
        if (value != null) {
          conf.set(key, value);
        } else {
          conf.unset(key);
        }
      });
    }
  }
}
