package io.eigenmill.demo;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.demo.FleetTelemetryGenerator.FleetSpec;
import io.eigenmill.demo.FleetTelemetryGenerator.Layout;
import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import org.junit.jupiter.api.Test;

/** The generator's command line, without Spark: flags, count syntax, and errors that name the flag and value. */
class GeneratorArgumentsTest {

  @Test
  void countsAcceptSeparatorsExponentsAndSuffixes() {
    for (String text : new String[] {"2000000", "2_000_000", "2,000,000", "2e6", "2E6", "2m", "2M", "2.0m", "0.002b"}) {
      assertEquals(2_000_000L, GeneratorArguments.count("--rows", text, 1, Long.MAX_VALUE), text);
    }
    assertEquals(1_500L, GeneratorArguments.count("--rows", "1.5k", 1, Long.MAX_VALUE));
    assertEquals(120_000L, GeneratorArguments.count("--rows", " 120000 ", 1, Long.MAX_VALUE));
    assertEquals(0L, GeneratorArguments.count("--extra-metrics", "0", 0, 10));
  }

  @Test
  void everyFlagIsReadInBothForms() {
    GeneratorArguments a = GeneratorArguments.parse(new String[] {"--out", "/tmp/fleet", "--rows", "2m", "--seed=-7",
        "--extra-metrics", "40", "--partitions=16", "--master", "local[2]"});
    assertEquals("/tmp/fleet", a.out());
    assertEquals("local[2]", a.master());
    assertEquals(new FleetSpec(2_000_000, -7, 40, 16, "2026-11-02"), a.spec());
    GeneratorArguments days = GeneratorArguments.parse(new String[] {"--out", "/tmp/fleet", "--rows", "57600",
        "--hosts=40", "--start-date", "2026-11-16"});
    assertEquals(new FleetSpec(57_600, 20261201L, 0, 8, "2026-11-16", 40), days.spec());
    assertEquals(40, days.spec().hosts());
    assertEquals(5 * 288, days.spec().intervals(), "40 hosts, 57,600 rows: five days of 5-minute intervals");
  }

  @Test
  void layoutIsWideUnlessLongIsAsked() {
    assertEquals(Layout.WIDE, GeneratorArguments.parse(new String[] {"--out", "o"}).layout());
    assertEquals(Layout.LONG, GeneratorArguments.parse(new String[] {"--out", "o", "--layout", "long"}).layout());
    assertEquals(Layout.LONG, GeneratorArguments.parse(new String[] {"--out=o", "--layout=LONG"}).layout());
    assertEquals(Layout.WIDE, GeneratorArguments.parse(new String[] {"--out=o", "--layout", "wide"}).layout());
    assertTrue(GeneratorArguments.USAGE.contains("--layout wide|long"), GeneratorArguments.USAGE);
    for (String renamed : FleetTelemetryGenerator.LONG_NAMES.values()) {
      assertTrue(GeneratorArguments.USAGE.contains(renamed), "usage names " + renamed);
    }
  }

  @Test
  void onlyTheOutputIsRequired() {
    GeneratorArguments a = GeneratorArguments.parse(new String[] {"--out=data"});
    assertEquals(FleetSpec.defaults(), a.spec());
    assertNull(a.master(), "no --master: local[*] unless spark-submit gave one");
  }

  @Test
  void errorsNameTheFlagAndTheValue() {
    expectError("--rows 2x", "--out", "o", "--rows", "2x");
    expectError("--rows 1.5: not a whole number", "--out", "o", "--rows", "1.5");
    expectError("--rows 0: must be between 1", "--out", "o", "--rows", "0");
    expectError("--rows -3: must be between 1", "--out", "o", "--rows", "-3");
    expectError("--partitions 0: must be between 1", "--out", "o", "--partitions", "0");
    expectError("--extra-metrics 100001: must be between 0 and 100000", "--out", "o", "--extra-metrics", "100001");
    expectError("--seed abc", "--out", "o", "--seed", "abc");
    expectError("--layout tall: must be wide or long", "--out", "o", "--layout", "tall");
    expectError("unknown flag --colour", "--out", "o", "--colour", "red");
    expectError("unknown flag extra", "--out", "o", "extra");
    expectError("--rows needs a value", "--out", "o", "--rows");
    expectError("--out is required", "--rows", "10");
    expectError("--out needs a non-empty value", "--out", " ");
  }

  @Test
  void aBadFlagExitsWithTwoBeforeAnySparkWork() {
    ByteArrayOutputStream err = new ByteArrayOutputStream();
    ByteArrayOutputStream out = new ByteArrayOutputStream();
    int code = FleetTelemetryGenerator.run(new String[] {"--out", "x", "--rows", "many"},
        new PrintStream(out, true, StandardCharsets.UTF_8), new PrintStream(err, true, StandardCharsets.UTF_8));
    assertEquals(2, code);
    String message = err.toString(StandardCharsets.UTF_8);
    assertTrue(message.contains("--rows many"), message);
    assertTrue(message.contains("usage:"), message);
    assertEquals("", out.toString(StandardCharsets.UTF_8));
  }

  private static void expectError(String expected, String... args) {
    IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> GeneratorArguments.parse(args),
        String.join(" ", args));
    assertTrue(e.getMessage().contains(expected), "message for " + String.join(" ", args) + ": " + e.getMessage());
  }
}
