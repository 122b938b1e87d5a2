package io.eigenmill;

import java.io.IOException;
import java.io.InputStream;
import java.util.Properties;

/**
 * The product version, the Spark line it was built for and the JVM flags it runs with (from the resource Maven fills
 * in at build time), and the Spark and Scala versions it runs on (from the class path).
 */
public final class Version {
  private static final Properties BUILD = load();
  private static final String CURRENT = filled("version", "unknown");
  private static final String JVM_FLAGS = filled("jvm.opens", "");
  private static final String BUILT_LINE = filled("spark.line", "unknown");
  private static final String BUILT_SPARK = filled("spark.version", "unknown");
  private static final String BUILT_SCALA = filled("scala.binary.version", "unknown");

  private Version() {}

  public static String current() {
    return CURRENT;
  }

  /** The Spark version this process runs on (the one on its class path), e.g. {@code 3.5.9} or {@code 4.2.0}. */
  public static String spark() {
    return org.apache.spark.package$.MODULE$.SPARK_VERSION();
  }

  /** The Scala version this process runs on, e.g. {@code 2.12.18} or {@code 2.13.16}. */
  public static String scala() {
    return scala.util.Properties.versionNumberString();
  }

  /** Spark and Scala this process runs on, as one phrase: {@code Spark 3.5.9, Scala 2.12.18}. */
  public static String runtime() {
    return "Spark " + spark() + ", Scala " + scala();
  }

  /** The Spark line this build is for: {@code 3.5} or {@code 4} (pom.xml's spark.line; the profile spark4). */
  public static String builtLine() {
    return BUILT_LINE;
  }

  /** The Spark version this build compiled against (pom.xml's spark.version). */
  public static String builtSpark() {
    return BUILT_SPARK;
  }

  /** The Scala binary version this build is for ({@code 2.12} or {@code 2.13}): the suffix of the jar's name. */
  public static String builtScala() {
    return BUILT_SCALA;
  }

  /**
   * The JVM flags driver and executors need on Java 17, space-separated: the module openings the Spark line needs and
   * {@code --add-modules=jdk.incubator.vector} (pom.xml's {@code spark.jvm.opens} of the line built, the list the
   * tests and the runners use). Empty when the resource was not filled in by the build (classes compiled outside Maven).
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
