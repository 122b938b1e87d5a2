package io.eigenmill.testing;

import java.io.File;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import java.util.jar.Attributes;
import java.util.jar.JarEntry;
import java.util.jar.JarFile;
import java.util.jar.JarOutputStream;
import java.util.jar.Manifest;
import java.util.stream.Stream;

/**
 * The application jar the cluster tests submit, assembled the way the shade plugin lays out the thin jar: the
 * compiled classes and resources of {@code classes/} of the build directory plus the classes of Typesafe Config (the one dependency
 * Spark does not ship), nothing of Spark. Assembled from what the test run already has, so the tests need no
 * {@code mvn package} (which would run the tests again). Config stays under its own package name here, where the
 * shaded jar relocates it; the cluster's classpath has no other copy of it, so the difference is invisible.
 */
public final class ThinJar {
  private ThinJar() {}

  /** Writes the jar to {@code out} and returns it. */
  public static Path assemble(Path classes, Path out) {
    if (!Files.isDirectory(classes.resolve("io/eigenmill/cli"))) {
      throw new IllegalStateException(classes + " holds no compiled eigenmill classes: run the tests through Maven");
    }
    Path config = typesafeConfigJar();
    Manifest manifest = new Manifest();
    manifest.getMainAttributes().put(Attributes.Name.MANIFEST_VERSION, "1.0");
    manifest.getMainAttributes().put(Attributes.Name.IMPLEMENTATION_TITLE, "eigenmill");
    try {
      Files.createDirectories(out.getParent());
      Path partial = out.resolveSibling(out.getFileName() + ".partial");
      try (JarOutputStream jar = new JarOutputStream(Files.newOutputStream(partial), manifest)) {
        Set<String> written = new HashSet<>(List.of("META-INF/", "META-INF/MANIFEST.MF"));
        addTree(jar, classes, written);
        addJar(jar, config, written);
      }
      Files.move(partial, out, java.nio.file.StandardCopyOption.REPLACE_EXISTING);
      return out;
    } catch (IOException e) {
      throw new UncheckedIOException("cannot assemble " + out, e);
    }
  }

  private static Path typesafeConfigJar() {
    for (String entry : System.getProperty("java.class.path").split(File.pathSeparator)) {
      if (entry.replace('\\', '/').contains("/com/typesafe/config/") && entry.endsWith(".jar")) {
        return Path.of(entry);
      }
    }
    throw new IllegalStateException("Typesafe Config is not on the test classpath: " + System.getProperty(
        "java.class.path"));
  }

  private static void addTree(JarOutputStream jar, Path root, Set<String> written) throws IOException {
    List<Path> files = new ArrayList<>();
    try (Stream<Path> walk = Files.walk(root)) {
      walk.filter(Files::isRegularFile).sorted().forEach(files::add);
    }
    for (Path f : files) {
      String name = root.relativize(f).toString().replace(File.separatorChar, '/');
      addDirectories(jar, name, written);
      if (written.add(name)) {
        jar.putNextEntry(new JarEntry(name));
        Files.copy(f, jar);
        jar.closeEntry();
      }
    }
  }

  private static void addJar(JarOutputStream jar, Path source, Set<String> written) throws IOException {
    try (JarFile in = new JarFile(source.toFile())) {
      for (JarEntry e : java.util.Collections.list(in.entries())) {
        String name = e.getName();
        boolean signature = name.startsWith("META-INF/") && (name.endsWith(".SF") || name.endsWith(".RSA")
            || name.endsWith(".DSA"));
        if (e.isDirectory() || signature || !written.add(name)) {
          continue;
        }
        addDirectories(jar, name, written);
        jar.putNextEntry(new JarEntry(name));
        try (InputStream data = in.getInputStream(e)) {
          data.transferTo(jar);
        }
        jar.closeEntry();
      }
    }
  }

  private static void addDirectories(JarOutputStream jar, String name, Set<String> written) throws IOException {
    int slash = name.indexOf('/');
    while (slash > 0) {
      String dir = name.substring(0, slash + 1);
      if (written.add(dir)) {
        jar.putNextEntry(new JarEntry(dir));
        jar.closeEntry();
      }
      slash = name.indexOf('/', slash + 1);
    }
  }

  /** For tests that want to look inside. */
  public static boolean contains(Path jarFile, String entry) {
    try (JarFile jar = new JarFile(jarFile.toFile())) {
      return jar.getEntry(entry) != null;
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
