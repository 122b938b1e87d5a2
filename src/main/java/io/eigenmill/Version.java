package io.eigenmill;

import java.io.IOException;
import java.io.InputStream;
import java.util.Properties;

/** The product version and the JVM flags it runs with, from the resource Maven fills in at build time. */
public final class Version {
  private static final Properties BUILD = load();
  private static final String CURRENT = filled("version", "unknown");
  private static final String JVM_FLAGS = filled("jvm.opens", "");

  private Version() {}

  public static String current() {
    return CURRENT;
  }

  /**
   * The JVM flags driver and executors need on Java 17, space-separated: the module openings Spark 3.5 needs and
   * {@code --add-modules=jdk.incubator.vector} (pom.xml's {@code spark.jvm.opens}, the list the tests and the
   * runners use). Empty when the resource was not filled in by the build (classes compiled outside Maven).
   */
  public static String jvmFlags() {
    return JVM_FLAGS;
  }

  private static String filled(String key, String otherwise) {
    String v = BUILD.getProperty(key, otherwise).trim();
    return v.startsWith("${") ? otherwise : v;
  }

  private static Properties load() {
    Properties p = new Properties();
    try (InputStream in = Version.class.getResourceAsStream("/io/eigenmill/version.properties")) {
      if (in != null) {
        p.load(in);
      }
    } catch (IOException e) {
      // the version reads "unknown" and the flags are empty
    }
    return p;
  }
}
