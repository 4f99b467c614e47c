// Is `roundtrip check`'s time estimate trustworthy? For each case: `roundtrip check` twice
// (stability: the two estimates and their spread) and `roundtrip run` once (the real time: the
// run's own figure on its "results:" line, and the process wall time), then estimate/actual.
//
//   ./build/benchmarks/roundtrip_bench_check_estimate [--max-run SECONDS] [--threads N]
//                                                     [CASE.toml ...]
//
// --threads N is passed to both commands. On a loaded machine use --threads 1: a one-thread
// run's CPU time is its wall time on a machine it has to itself, so est/cpu is then a fair
// figure whatever the load (with 2 threads, CPU/threads also assumes that the work balances over
// the threads, which 3 gaps on 2 threads do not: fibre_over_mirror showed est/cpu 2.3 on 2
// threads and 1.35 on 1).
//
// Without cases: every cases/*.toml and benchmarks/cases/*.toml of the source tree. A case whose
// estimate is above --max-run (default 600 s) is checked but not run ("not run"). The programs
// are those of this build (../roundtrip beside this benchmark's directory).
#include <fmt/format.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <array>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <regex>
#include <string>
#include <vector>

namespace fs = std::filesystem;

namespace {

struct Output {
  std::string text;
  int status = -1;
  double wall = 0.0;
  double cpu = 0.0;  // user + system time of the program, s
};

double children_cpu_seconds() {
  rusage u{};
  getrusage(RUSAGE_CHILDREN, &u);
  return static_cast<double>(u.ru_utime.tv_sec + u.ru_stime.tv_sec) +
         1e-6 * static_cast<double>(u.ru_utime.tv_usec + u.ru_stime.tv_usec);
}

Output run_program(const std::string& command) {
  Output o;
  const double c0 = children_cpu_seconds();
  const auto t0 = std::chrono::steady_clock::now();
  FILE* p = popen((command + " 2>/dev/null").c_str(), "r");
  if (!p) return o;
  std::array<char, 4096> buf{};
  while (fgets(buf.data(), buf.size(), p)) o.text += buf.data();
  const int st = pclose(p);
  o.status = WIFEXITED(st) ? WEXITSTATUS(st) : -1;
  o.wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  o.cpu = children_cpu_seconds() - c0;
  return o;
}

// "1.2 s", "35 ms", "3.4 min", "1.2 h" (Progress::duration_text) -> seconds; < 0 if absent.
double duration_seconds(const std::string& number, const std::string& unit) {
  const double v = std::stod(number);
  if (unit == "ms") return 1e-3 * v;
  if (unit == "s") return v;
  if (unit == "min") return 60.0 * v;
  if (unit == "h") return 3600.0 * v;
  return -1.0;
}

double check_estimate(const std::string& text) {
  static const std::regex re(R"(estimate\s+about ([0-9.eE+-]+) (ms|s|min|h) on)");
  std::smatch m;
  return std::regex_search(text, m, re) ? duration_seconds(m[1], m[2]) : -1.0;
}

// The run's own time ("results: ... 4.08 s on 2 threads") and its threads.
std::pair<double, int> run_seconds(const std::string& text) {
  static const std::regex re(R"(results: .*, ([0-9.eE+-]+) s on (\d+) thread)");
  std::smatch m;
  return std::regex_search(text, m, re) ? std::pair{std::stod(m[1]), std::stoi(m[2])}
                                        : std::pair{-1.0, 1};
}

std::string shell_quote(const std::string& s) {
  std::string q = "'";
  for (char c : s) q += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return q + "'";
}

}  // namespace

int main(int argc, char** argv) {
  double max_run = 600.0;
  int threads = 0;
  std::vector<fs::path> cases;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--max-run" && i + 1 < argc)
      max_run = std::stod(argv[++i]);
    else if (a == "--threads" && i + 1 < argc)
      threads = std::stoi(argv[++i]);
    else
      cases.emplace_back(a);
  }
  const fs::path source = fs::path(__FILE__).parent_path().parent_path();
  if (cases.empty()) {
    for (const fs::path dir : {source / "cases", source / "benchmarks" / "cases"}) {
      std::vector<fs::path> found;
      for (const auto& e : fs::directory_iterator(dir))
        if (e.path().extension() == ".toml") found.push_back(e.path());
      std::sort(found.begin(), found.end());
      cases.insert(cases.end(), found.begin(), found.end());
    }
  }
  const fs::path program =
      fs::read_symlink("/proc/self/exe").parent_path().parent_path() / "roundtrip";
  const fs::path tmp = fs::temp_directory_path() / fmt::format("rt_check_bench_{}", getpid());
  fs::create_directories(tmp);
  std::string load;
  if (FILE* f = fopen("/proc/loadavg", "r")) {
    char b[128] = {};
    if (fgets(b, sizeof b, f)) load = b;
    fclose(f);
  }
  fmt::print("load average at start: {}", load);
  // est/run: the mean of the two estimates over the run's own time. est/cpu: over the run
  // program's CPU time divided by its threads, what the run takes on a machine it has to itself
  // (check estimates that: plan_timing.h), for comparison when other programs load the cores.
  fmt::print("{:<36} {:>9} {:>9} {:>6} {:>8} {:>9} {:>9} {:>9} {:>7} {:>7}\n", "case", "check 1",
             "check 2", "spread", "check", "run", "process", "cpu/thr", "est/run", "est/cpu");
  int within = 0, within_cpu = 0, total = 0;
  const std::string thread_option = threads > 0 ? fmt::format(" --threads {}", threads) : "";
  for (const auto& c : cases) {
    const std::string check_cmd = fmt::format("{} check {}{}", shell_quote(program.string()),
                                              shell_quote(c.string()), thread_option);
    const Output c1 = run_program(check_cmd), c2 = run_program(check_cmd);
    const double e1 = check_estimate(c1.text), e2 = check_estimate(c2.text);
    const double spread = std::abs(e1 - e2) / std::min(e1, e2);
    std::string run_text = "not run", wall_text = "-", ratio_text = "-", cpu_text = "-",
                cpu_ratio_text = "-";
    if (e1 > 0.0 && std::max(e1, e2) <= max_run) {
      const fs::path out = tmp / (c.stem().string() + ".h5");
      const Output r = run_program(
          fmt::format("{} run {} -o {} --quiet --restart{}", shell_quote(program.string()),
                      shell_quote(c.string()), shell_quote(out.string()), thread_option));
      const auto [actual, threads] = run_seconds(r.text);
      if (actual >= 0.0 && r.status == 0) {
        const double mean = 0.5 * (e1 + e2);
        const double cpu = r.cpu / threads;
        // The run prints its time with 2 decimals: "0.00 s" is below 5 ms, no ratio.
        run_text = actual > 0.0 ? fmt::format("{:.3g} s", actual) : "<0.005 s";
        wall_text = fmt::format("{:.3g} s", r.wall);
        cpu_text = fmt::format("{:.3g} s", cpu);
        if (actual > 0.0) ratio_text = fmt::format("{:.2f}", mean / actual);
        cpu_ratio_text = fmt::format("{:.2f}", mean / cpu);
        ++total;
        if (actual > 0.0 && mean / actual <= 2.0 && mean / actual >= 0.5) ++within;
        if (mean / cpu <= 2.0 && mean / cpu >= 0.5) ++within_cpu;
      } else {
        run_text = fmt::format("status {}", r.status);
      }
    }
    fmt::print("{:<36} {:>9} {:>9} {:>5.0f}% {:>8} {:>9} {:>9} {:>9} {:>7} {:>7}\n",
               c.filename().string(), fmt::format("{:.3g} s", e1), fmt::format("{:.3g} s", e2),
               100.0 * spread, fmt::format("{:.3g} s", 0.5 * (c1.wall + c2.wall)), run_text,
               wall_text, cpu_text, ratio_text, cpu_ratio_text);
    std::fflush(stdout);
  }
  fmt::print(
      "{} of {} runs within a factor of 2 of the estimate (mean of the two checks) against the "
      "run's own time, {} against its CPU time per thread\n",
      within, total, within_cpu);
  if (FILE* f = fopen("/proc/loadavg", "r")) {
    char b[128] = {};
    if (fgets(b, sizeof b, f)) fmt::print("load average at the end: {}", b);
    fclose(f);
  }
  std::error_code ec;
  fs::remove_all(tmp, ec);
  return 0;
}
