/**
 * `f` run with a module's WebAssembly kernels off (its JavaScript path), then on, through that module's
 * switch (`useKernels` of @lamina/processing): [JavaScript, kernels], for bit-for-bit tests. The switch is
 * left on.
 */
export function kernelsOffAndOn<T>(useKernels: (on: boolean) => void, f: () => T): [T, T] {
  useKernels(false);
  try {
    const js = f();
    useKernels(true);
    return [js, f()];
  } finally {
    useKernels(true);
  }
}
