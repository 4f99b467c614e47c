// Set-up cost of a scan: parse a case, expand every scan point, build every geometry (what
// `roundtrip check` and `run` do before the first frequency), as the number of points grows, and
// with a large tabulated material used at every point. No solver work is timed.
//   ./build/benchmarks/roundtrip_bench_scan_setup [N ...] [--table-rows R] [--table-points P]
// Defaults: N = 100 1000 10000 (a sphere radius axis of N values), R = 1000000, P = 10.
// Case and table are written to a temporary directory; the table is an invented Drude metal
// (eps = 1 - wp^2/(w (w + i g)), wp = 9 eV, g = 35 meV; standard form) from 10 meV to 100 eV.
#include <fmt/format.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "io/case_file.h"

using namespace roundtrip;
namespace fs = std::filesystem;

namespace {

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

const char* kHead = R"(geometry = "sphere-plate"
[plate]
material = "gold-drude"
[sphere]
radius = "10 um"
material = "gold-drude"
[separations]
values = ["100 nm", "200 nm"]
[conditions]
temperature = "300 K"
)";

struct SetUp {
  double wall = 0.0, cpu = 0.0;  // s; cpu is the process CPU time (the machine may be shared)
  std::size_t points = 0;
};

// What `roundtrip run` does before computing: load_case (which checks every point), then
// scan_points again and every geometry.
SetUp set_up(const fs::path& file) {
  const auto t0 = std::chrono::steady_clock::now();
  const std::clock_t c0 = std::clock();
  const io::CaseSpec spec = io::load_case(file);
  const auto points = io::scan_points(spec);
  for (const auto& p : points) (void)io::build_geometry(p.spec);
  return {seconds_since(t0), static_cast<double>(std::clock() - c0) / CLOCKS_PER_SEC,
          points.size()};
}

void write_table(const fs::path& file, long rows) {
  std::ofstream out(file);
  out << "# invented Drude metal, wp = 9 eV, g = 0.035 eV (benchmark data)\nenergy_eV, eps1, "
         "eps2\n";
  const double wp = 9.0, g = 0.035;
  for (long i = 0; i < rows; ++i) {
    const double e = 0.01 * std::pow(1e4, static_cast<double>(i) / static_cast<double>(rows - 1));
    const double d = e * e + g * g;
    out << fmt::format("{:.9e}, {:.9e}, {:.9e}\n", e, 1.0 - wp * wp / d, wp * wp * g / (e * d));
  }
}

}  // namespace

int main(int argc, char** argv) {
  std::vector<long> counts;
  long table_rows = 1000000, table_points = 10;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--table-rows" && i + 1 < argc)
      table_rows = std::strtol(argv[++i], nullptr, 10);
    else if (a == "--table-points" && i + 1 < argc)
      table_points = std::strtol(argv[++i], nullptr, 10);
    else
      counts.push_back(std::strtol(argv[i], nullptr, 10));
  }
  if (counts.empty()) counts = {100, 1000, 10000};
  const fs::path dir = fs::temp_directory_path() / fmt::format("roundtrip_bench_scan_{}", getpid());
  fs::create_directories(dir);

  std::printf("scan set-up (parse, expand, build geometries): sphere radius axis of N values\n");
  std::printf("%8s %10s %10s %12s\n", "N", "wall [s]", "cpu [s]", "cpu ms/point");
  for (long n : counts) {
    std::string text = std::string(kHead) + "[scan]\nradius = [";
    for (long i = 0; i < n; ++i) text += fmt::format("{}\"{} nm\"", i ? ", " : "", 1000 + i);
    text += "]\n";
    const fs::path file = dir / fmt::format("scan_{}.toml", n);
    std::ofstream(file) << text;
    const SetUp r = set_up(file);
    std::printf("%8zu %10.3f %10.3f %12.4f\n", r.points, r.wall, r.cpu,
                1e3 * r.cpu / static_cast<double>(r.points));
  }

  if (table_rows > 0 && table_points > 0) {
    const fs::path table = dir / "drude_table.csv";
    write_table(table, table_rows);
    std::string text = std::string(kHead) + R"([materials.tab]
model = "table"
file = "drude_table.csv"
[scan]
sphere.material = ["tab"]
temperature = [)";
    for (long i = 0; i < table_points; ++i) text += fmt::format("{}\"{} K\"", i ? ", " : "", 1 + i);
    text += "]\n";
    const fs::path file = dir / "table_scan.toml";
    std::ofstream(file) << text;
    const SetUp r = set_up(file);
    std::printf(
        "table material of %ld rows at every point: %zu points in %.3f s wall, %.3f s cpu\n",
        table_rows, r.points, r.wall, r.cpu);
  }
  fs::remove_all(dir);
  return 0;
}
