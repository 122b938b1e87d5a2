package io.eigenmill.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;

/**
 * The README's "Java API" example is the test {@link EigenmillExampleTest} runs: the README's java code block equals,
 * line for line, that class's test method (from {@code @Test} to its closing brace, less the class body's indent).
 */
class EigenmillReadmeTest {

  @Test
  void readmeExampleIsTheTestedCode() throws Exception {
    List<String> readme = Files.readAllLines(Path.of("README.md"));
    int section = readme.indexOf("## Java API");
    assertTrue(section >= 0, "README.md has a section \"## Java API\"");
    int open = readme.subList(section, readme.size()).indexOf("```java") + section;
    assertTrue(open > section, "the Java API section has a java code block");
    int close = readme.subList(open + 1, readme.size()).indexOf("```") + open + 1;
    List<String> block = readme.subList(open + 1, close);

    List<String> test = Files.readAllLines(Path.of("src/test/java/io/eigenmill/api/EigenmillExampleTest.java"));
    int start = test.indexOf("  @Test");
    int end = test.subList(start, test.size()).indexOf("  }") + start;
    assertTrue(start >= 0 && end > start, "EigenmillExampleTest has one test method");
    List<String> method = new ArrayList<>();
    for (String line : test.subList(start, end + 1)) {
      method.add(line.startsWith("  ") ? line.substring(2) : line);
    }
    assertEquals(String.join("\n", method), String.join("\n", block),
        "README.md's Java API example and EigenmillExampleTest's test method differ");
  }
}
