// roundtrip command-line program: a thin layer over the library (see io/cli/commands.h).
#include <cstdio>
int main() {
  std::fprintf(stderr, "roundtrip: the command-line interface is being built\n");
  return 1;
}
