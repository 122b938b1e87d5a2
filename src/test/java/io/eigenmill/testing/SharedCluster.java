package io.eigenmill.testing;

import org.junit.jupiter.api.extension.ExtensionContext;
import org.junit.jupiter.api.extension.ParameterContext;
import org.junit.jupiter.api.extension.ParameterResolver;

/**
 * Hands one {@link LoopbackCluster} to every test class that asks for it as a parameter ({@code @BeforeAll static
 * void setUp(LoopbackCluster cluster)}): started on first use, kept in the root store of the test run and stopped
 * when the run ends, so the classes that need a cluster pay for starting it once.
 */
public final class SharedCluster implements ParameterResolver {
  private static final ExtensionContext.Namespace NAMESPACE = ExtensionContext.Namespace.create(SharedCluster.class);

  @Override
  public boolean supportsParameter(ParameterContext parameter, ExtensionContext context) {
    return parameter.getParameter().getType() == LoopbackCluster.class;
  }

  @Override
  public Object resolveParameter(ParameterContext parameter, ExtensionContext context) {
    return context.getRoot().getStore(NAMESPACE)
        .getOrComputeIfAbsent("cluster", key -> LoopbackCluster.start(), LoopbackCluster.class);
  }
}
