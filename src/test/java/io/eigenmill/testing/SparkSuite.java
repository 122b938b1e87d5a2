package io.eigenmill.testing;

import com.holdenkarau.spark.testing.JavaDataFrameSuiteBase;
import org.apache.spark.SparkConf;
import org.apache.spark.sql.SparkSession;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;

/**
 * Base of every JUnit 5 test class that needs Spark. spark-testing-base owns the one SparkContext of the JVM; this
 * class borrows it through {@link JavaDataFrameSuiteBase} (started before the class's tests, stopped after them),
 * so JUnit 5 classes and the library's own JUnit 4 classes share one session at a time. Quiet local[2] on loopback,
 * UI off.
 */
public abstract class SparkSuite {
  private static Borrowed borrowed;
  protected static SparkSession spark;

  /** The library's suite base with our local configuration. */
  public static class Borrowed extends JavaDataFrameSuiteBase {
    @Override
    public SparkConf conf() {
      return TestConf.conf();
    }

    /** No Hive: the library's default builder needs Hive classes that are not on our classpath. */
    @Override
    public SparkSession.Builder builder() {
      return SparkSession.builder().config(TestConf.conf());
    }
  }

  @BeforeAll
  public static void startSpark() {
    borrowed = new Borrowed();
    borrowed.runBefore();
    spark = borrowed.spark();
  }

  @AfterAll
  public static void stopSpark() {
    JavaDataFrameSuiteBase.runAfterClass();
    SparkSession.clearActiveSession();
    SparkSession.clearDefaultSession();
    spark = null;
    borrowed = null;
  }

  /** The spark-testing-base suite, for its DataFrame assertions. */
  protected static JavaDataFrameSuiteBase frames() {
    return borrowed;
  }
}
