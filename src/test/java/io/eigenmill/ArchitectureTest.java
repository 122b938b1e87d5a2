package io.eigenmill;

import static com.tngtech.archunit.lang.syntax.ArchRuleDefinition.noClasses;
import static com.tngtech.archunit.library.dependencies.SlicesRuleDefinition.slices;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.tngtech.archunit.core.domain.JavaClass;
import com.tngtech.archunit.core.domain.JavaClasses;
import com.tngtech.archunit.core.importer.ClassFileImporter;
import com.tngtech.archunit.core.importer.ImportOption;
import com.tngtech.archunit.lang.ArchRule;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The layout's rules (DEVELOPERS.md, "Where things live"), checked on the compiled product classes with ArchUnit:
 * no cycles between top-level packages, dependencies only downwards in the stated order, no Spark in any
 * {@code math} package, and nothing of the benchmark harness among the product's classes.
 */
class ArchitectureTest {
  /**
   * Top-level packages from the top down: a package may depend only on packages after it. Capabilities (kmeans,
   * monitor, pca) sit between the run record and the shared engine, io, plan, math and settings packages.
   */
  static final List<String> ORDER = List.of("api", "cli", "run", "report", "record", "kmeans", "monitor", "pca", "plan",
      "io", "engine", "math", "settings");
  /** Packages outside the order: the demo generator (a tool beside the product), and the root (Version). */
  static final Map<String, Set<String>> SIDE = Map.of("demo", Set.of("io", "engine", "math", "settings"));

  private static JavaClasses product;

  @BeforeAll
  static void importProduct() {
    // ArchUnit's own test filter knows target/test-classes only; each Spark line builds in its own directory
    // (target/, target-spark4/), hence the explicit test-classes rule
    product = new ClassFileImporter().withImportOption(ImportOption.Predefined.DO_NOT_INCLUDE_TESTS)
        .withImportOption(location -> !location.contains("/test-classes/"))
        .withImportOption(ImportOption.Predefined.DO_NOT_INCLUDE_JARS)
        .importPackages("io.eigenmill");
    // a guard against an empty import (a wrong class path would make every rule pass)
    assertTrue(product.size() > 150, "product classes imported: " + product.size());
  }

  @Test
  void topLevelPackagesHaveNoCycles() {
    ArchRule rule = slices().matching("io.eigenmill.(*)..").should().beFreeOfCycles();
    rule.check(product);
  }

  @Test
  void mathPackagesImportNoSpark() {
    ArchRule rule = noClasses().that().resideInAPackage("io.eigenmill..math..")
        .should().dependOnClassesThat().resideInAnyPackage("org.apache.spark..", "scala..");
    rule.check(product);
  }

  @Test
  void dependenciesPointDownTheOrder() {
    Map<String, Set<String>> wrong = new TreeMap<>();
    for (JavaClass c : product) {
      String from = topLevel(c.getPackageName());
      if (from == null) {
        continue;
      }
      for (var dep : c.getDirectDependenciesFromSelf()) {
        String to = topLevel(dep.getTargetClass().getPackageName());
        if (to == null || to.equals(from) || allowed(from, to)) {
          continue;
        }
        wrong.computeIfAbsent(from + " -> " + to, x -> new TreeSet<>())
            .add(c.getSimpleName() + " uses " + dep.getTargetClass().getSimpleName());
      }
    }
    assertEquals(Map.of(), wrong, "dependencies against the order " + ORDER);
  }

  /**
   * The Java API is a front-end like the command line: it reaches the jobs through the runner (and the settings,
   * the run record and the model it hands back), never a capability or the engine directly.
   */
  @Test
  void apiUsesOnlyTheRunnerItsSettingsAndRecords() {
    ArchRule rule = noClasses().that().resideInAPackage("io.eigenmill.api..")
        .should().dependOnClassesThat().resideInAnyPackage("io.eigenmill.cli..", "io.eigenmill.report..",
            "io.eigenmill.kmeans..", "io.eigenmill.monitor..", "io.eigenmill.pca..", "io.eigenmill.plan..",
            "io.eigenmill.engine..", "io.eigenmill.math..", "io.eigenmill.demo..");
    rule.check(product);
  }

  @Test
  void everyProductPackageIsPlaced() {
    Set<String> unplaced = new TreeSet<>();
    for (JavaClass c : product) {
      String p = topLevel(c.getPackageName());
      if (p != null && !ORDER.contains(p) && !SIDE.containsKey(p)) {
        unplaced.add(p);
      }
    }
    assertEquals(Set.of(), unplaced, "top-level packages missing from ArchitectureTest.ORDER");
  }

  @Test
  void noBenchmarkClassAmongTheProductClasses() throws Exception {
    Path classes = io.eigenmill.testing.BuildDir.resolve("classes").resolve("io").resolve("eigenmill");
    assertTrue(Files.isDirectory(classes), "compiled product classes at " + classes);
    List<Path> bench = new ArrayList<>();
    try (var files = Files.walk(classes)) {
      files.filter(p -> p.toString().contains("/bench/") || p.getFileName().toString().startsWith("Bench"))
          .forEach(bench::add);
    }
    assertEquals(List.of(), bench, "benchmark classes are compiled with the tests (src/bench/java), not the product");
    ArchRule rule = noClasses().should().dependOnClassesThat().resideInAPackage("io.eigenmill.bench..");
    rule.check(product);
  }

  /** The package right under io.eigenmill, or null for the root and foreign packages. */
  private static String topLevel(String pkg) {
    if (!pkg.startsWith("io.eigenmill.")) {
      return null;
    }
    String rest = pkg.substring("io.eigenmill.".length());
    int dot = rest.indexOf('.');
    return dot < 0 ? rest : rest.substring(0, dot);
  }

  private static boolean allowed(String from, String to) {
    if (SIDE.containsKey(from)) {
      return SIDE.get(from).contains(to);
    }
    int a = ORDER.indexOf(from);
    int b = ORDER.indexOf(to);
    return a >= 0 && b > a;
  }
}
