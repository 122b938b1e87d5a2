package io.eigenmill;

import java.io.IOException;
import java.io.InputStream;
import java.util.Properties;

/** The product version, from the resource Maven fills in at build time. */
public final class Version {
  private static final String CURRENT = load();

  private Version() {}

  public static String current() {
    return CURRENT;
  }

  private static String load() {
    try (InputStream in = Version.class.getResourceAsStream("/io/eigenmill/version.properties")) {
      Properties p = new Properties();
      if (in != null) {
        p.load(in);
      }
      String v = p.getProperty("version", "unknown");
      return v.startsWith("${") ? "unknown" : v;
    } catch (IOException e) {
      return "unknown";
    }
  }
}
