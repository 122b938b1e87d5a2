package io.eigenmill.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import io.eigenmill.testing.FleetFixture;
import java.awt.image.BufferedImage;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import java.util.stream.Stream;
import javax.imageio.ImageIO;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * Opens a report with every section in Debian's headless chromium: the DOM after load has every section and chart,
 * the screenshot is not blank and shows the chart colours, and the page logs nothing to the console. Output goes to
 * {@code report-browser/} of the build directory (report.html, report.png, chromium's logs). Chromium is required: without
 * {@code /usr/bin/chromium} the test fails and says how to install it.
 */
class ReportBrowserTest {
  static final Path CHROMIUM = Path.of("/usr/bin/chromium");
  static final long TIMEOUT_SECONDS = 60;
  static Path dir;
  static Path report;

  @BeforeAll
  static void writeReport() throws IOException {
    if (!Files.isExecutable(CHROMIUM)) {
      fail("the browser test needs Debian's chromium at " + CHROMIUM + ": install it with "
          + "`apt-get install chromium` (the package CI installs), then run the tests again");
    }
    dir = io.eigenmill.testing.BuildDir.resolve("report-browser");
    Files.createDirectories(dir);
    report = dir.resolve("report.html");
    Files.writeString(report, HtmlReport.render(new FleetFixture().full()), StandardCharsets.UTF_8);
  }

  @Test
  void domAfterLoadHasEverySectionAndChart() throws Exception {
    Run run = chromium("dom", "--dump-dom");
    String dom = run.stdout();
    assertTrue(dom.contains("</html>"), "chromium printed the DOM:\n" + tail(run.stderr()));
    for (String id : HtmlReportTest.ALL_SECTIONS) {
      assertTrue(dom.contains("<section id=\"" + id + "\""), "section " + id + " in the loaded DOM");
    }
    for (String id : HtmlReportTest.ALL_CHARTS) {
      assertTrue(dom.contains("<svg id=\"" + id + "\""), "chart " + id + " in the loaded DOM");
    }
    assertEquals(List.of(), consoleErrors(run.stderr()), "console messages while loading the report");
  }

  @Test
  void screenshotShowsTheCharts() throws Exception {
    Path png = dir.resolve("report.png");
    Files.deleteIfExists(png);
    Run run = chromium("screenshot", "--screenshot=" + png, "--hide-scrollbars");
    assertTrue(Files.isRegularFile(png), "screenshot written:\n" + tail(run.stderr()));
    BufferedImage image = ImageIO.read(png.toFile());
    assertEquals(1280, image.getWidth());
    assertEquals(3000, image.getHeight());
    Set<Integer> colours = new HashSet<>();
    long inked = 0;
    long kept = 0;
    long accent = 0;
    int keptRgb = Integer.parseInt(Palette.KEPT.substring(1), 16);
    int accentRgb = Integer.parseInt(Palette.ACCENT.substring(1), 16);
    for (int y = 0; y < image.getHeight(); y++) {
      for (int x = 0; x < image.getWidth(); x++) {
        int rgb = image.getRGB(x, y) & 0xffffff;
        colours.add(rgb);
        int r = rgb >> 16 & 255;
        int g = rgb >> 8 & 255;
        int b = rgb & 255;
        inked += Math.min(r, Math.min(g, b)) < 200 ? 1 : 0;
        kept += rgb == keptRgb ? 1 : 0;
        accent += rgb == accentRgb ? 1 : 0;
      }
    }
    long pixels = (long) image.getWidth() * image.getHeight();
    assertTrue(colours.size() > 200, "distinct colours in the screenshot: " + colours.size());
    assertTrue(inked > pixels / 50, "pixels with ink: " + inked + " of " + pixels);
    assertTrue(kept > 2000, "pixels of the kept-component colour (scree bars, key figures): " + kept);
    assertTrue(accent > 100, "pixels of the accent colour (cumulative curve): " + accent);
    assertEquals(List.of(), consoleErrors(run.stderr()), "console messages while taking the screenshot");
  }

  @Test
  void consoleErrorsWouldBeSeen() throws Exception {
    Path broken = dir.resolve("console-check.html");
    Files.writeString(broken, "<!DOCTYPE html><html><body><p>check</p><script>notDefined();</script></body></html>");
    Run run = chromium(broken, "console-check", "--dump-dom");
    assertFalse(consoleErrors(run.stderr()).isEmpty(), "a page with a script error must be reported; chromium's "
        + "log format may have changed:\n" + tail(run.stderr()));
  }

  /** Console lines (any level: the report has no script, so any message is a problem) and uncaught errors. */
  static List<String> consoleErrors(String stderr) {
    List<String> out = new ArrayList<>();
    for (String line : stderr.split("\n")) {
      if (line.contains(":CONSOLE") || line.contains("Uncaught")) {
        out.add(line);
      }
    }
    return out;
  }

  record Run(String stdout, String stderr) {}

  private Run chromium(String name, String... extra) throws Exception {
    return chromium(report, name, extra);
  }

  /** Runs chromium on {@code page} with a fresh profile; kills it (and its children) after the time limit. */
  private static Run chromium(Path page, String name, String... extra) throws Exception {
    Path profile = Files.createTempDirectory("eigenmill-chromium-");
    Path out = dir.resolve(name + ".stdout.txt");
    Path err = dir.resolve(name + ".stderr.txt");
    List<String> command = new ArrayList<>(List.of(CHROMIUM.toString(), "--headless", "--no-sandbox",
        "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
        "--disable-component-update", "--disable-sync", "--user-data-dir=" + profile, "--window-size=1280,3000",
        "--enable-logging=stderr", "--v=0"));
    command.addAll(List.of(extra));
    command.add(page.toUri().toString());
    Process p = new ProcessBuilder(command).redirectOutput(out.toFile()).redirectError(err.toFile()).start();
    try {
      if (!p.waitFor(TIMEOUT_SECONDS, TimeUnit.SECONDS)) {
        p.descendants().forEach(ProcessHandle::destroyForcibly);
        p.destroyForcibly().waitFor(10, TimeUnit.SECONDS);
        fail("chromium (" + name + ") did not finish within " + TIMEOUT_SECONDS + " s and was killed:\n"
            + tail(Files.readString(err)));
      }
      String stderr = Files.readString(err);
      assertEquals(0, p.exitValue(), "chromium (" + name + ") exit code:\n" + tail(stderr));
      return new Run(Files.readString(out), stderr);
    } finally {
      p.descendants().forEach(ProcessHandle::destroyForcibly);
      deleteTree(profile);
    }
  }

  private static String tail(String text) {
    return text.length() <= 3000 ? text : text.substring(text.length() - 3000);
  }

  private static void deleteTree(Path root) throws IOException {
    try (Stream<Path> paths = Files.walk(root)) {
      for (Path path : paths.sorted(Comparator.reverseOrder()).toList()) {
        Files.deleteIfExists(path);
      }
    }
  }
}
