// Is `roundtrip check`'s time estimate trustworthy? For each case: `roundtrip check` three
// times (stability: the spread of the three estimates, (max - min) / min) and `roundtrip run`
// once; then estimate (median of the three) over the run's process CPU time (user + system of
// the whole program: start, case reading, frequencies, HDF5 file), PASS if the ratio lies in
// [0.5, 2] and the spread is at most 20 %.
//
//   ./build/benchmarks/roundtrip_bench_check_estimate [--max-run SECONDS] [--threads N]
//       [--run-threads N] [--actual NAME=SECONDS ...] [CASE.toml ...]
//
// --threads N (default 1) is passed to both commands. CPU time, not wall time, is the actual
// figure: on a machine shared with other programs the wall time is stretched by their load, the
// CPU time is not (on a machine the run has to itself and one thread the two agree). With N > 1
// the CPU time is divided by N (the estimate is for N threads with ideal speed-up).
// --run-threads N: a CPU-time comparison for cases whose one-thread run is too long to wait
// for (the benchmark cases): `check` estimates for one thread (its estimate is then the CPU
// time the run needs), the run uses N threads (less wall time), and its whole process CPU time,
// not divided, is the actual figure (the parallel run's overhead counts against the estimate).
// --actual NAME=SECONDS: the run of case NAME (file name without .toml) is not started; SECONDS
// is its process CPU time measured apart (e.g. user + sys of `/usr/bin/time -v roundtrip run`
// with the same threads as the comparison), printed as "(given)".
//
// Without cases: every cases/*.toml and benchmarks/cases/*.toml of the source tree. A case whose
// estimate (divided by --run-threads) is above --max-run (default 600 s) is checked but not run;
// those are named at the end. The programs are those of this build (../roundtrip beside this
// benchmark's directory). The load average (/proc/loadavg) is printed at the start, after each
// case and at the end.
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
#include <map>
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

std::string shell_quote(const std::string& s) {
  std::string q = "'";
  for (char c : s) q += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return q + "'";
}

}  // namespace

std::string load_average() {
  std::string load;
  if (FILE* f = fopen("/proc/loadavg", "r")) {
    char b[128] = {};
    if (fgets(b, sizeof b, f)) load = b;
    fclose(f);
  }
  if (!load.empty() && load.back() == '\n') load.pop_back();
  return load.substr(0, load.find(' ', load.find(' ', load.find(' ') + 1) + 1));
}

int main(int argc, char** argv) {
  double max_run = 600.0;
  int threads = 1, run_threads = 0;
  std::map<std::string, double> given;  // --actual NAME=SECONDS
  std::vector<fs::path> cases;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--max-run" && i + 1 < argc) {
      max_run = std::stod(argv[++i]);
    } else if (a == "--threads" && i + 1 < argc) {
      threads = std::stoi(argv[++i]);
    } else if (a == "--run-threads" && i + 1 < argc) {
      run_threads = std::stoi(argv[++i]);
    } else if (a == "--actual" && i + 1 < argc) {
      const std::string v = argv[++i];
      const auto eq = v.find('=');
      if (eq == std::string::npos || eq == 0) {
        fmt::print(stderr, "--actual \"{}\": expected NAME=SECONDS\n", v);
        return 2;
      }
      given[v.substr(0, eq)] = std::stod(v.substr(eq + 1));
    } else {
      cases.emplace_back(a);
    }
  }
  // --run-threads: check on one thread (a CPU-time estimate), run on run_threads, CPU not
  // divided. Otherwise both on `threads`, the run's CPU divided by `threads`.
  const int check_threads = run_threads > 0 ? 1 : threads;
  const int runs_on = run_threads > 0 ? run_threads : threads;
  const double cpu_divisor = run_threads > 0 ? 1.0 : static_cast<double>(threads);
  // __FILE__ may be relative to the directory the compiler ran in (this program's own).
  fs::path source = fs::path(__FILE__).parent_path().parent_path();
  if (source.is_relative())
    source = (fs::read_symlink("/proc/self/exe").parent_path() / source).lexically_normal();
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
  fmt::print(
      "load average (1, 5, 15 min) at start: {}; check on {} thread{}, run on {}; actual = the "
      "run's process CPU time{}\n",
      load_average(), check_threads, check_threads == 1 ? "" : "s", runs_on,
      cpu_divisor == 1.0 ? "" : fmt::format(" / {}", threads));
  fmt::print("{:<36} {:>9} {:>9} {:>9} {:>6} {:>9} {:>9} {:>6} {:>6}  {}\n", "case", "check 1",
             "check 2", "check 3", "spread", "actual", "run wall", "ratio", "result", "load");
  int pass = 0, fail = 0;
  std::vector<std::string> not_run;
  for (const auto& c : cases) {
    const std::string check_cmd =
        fmt::format("{} check {} --threads {}", shell_quote(program.string()),
                    shell_quote(c.string()), check_threads);
    std::vector<double> e;
    for (int k = 0; k < 3; ++k) e.push_back(check_estimate(run_program(check_cmd).text));
    std::vector<double> sorted = e;
    std::sort(sorted.begin(), sorted.end());
    const double est = sorted[1];
    const double spread = (sorted[2] - sorted[0]) / sorted[0];
    std::string actual_text = "not run", wall_text = "-", ratio_text = "-", result = "-";
    if (!(sorted[0] > 0.0)) {
      actual_text = "check failed";
      result = "FAIL";
      ++fail;
    } else if (given.count(c.stem().string()) || sorted[2] * check_threads / runs_on <= max_run) {
      const auto it = given.find(c.stem().string());
      Output r;
      if (it != given.end()) {
        r.status = 0;
        r.cpu = it->second;  // the process CPU time, divided like a run of its own below
      } else {
        const fs::path out = tmp / (c.stem().string() + ".h5");
        r = run_program(fmt::format("{} run {} -o {} --quiet --restart --threads {}",
                                    shell_quote(program.string()), shell_quote(c.string()),
                                    shell_quote(out.string()), runs_on));
      }
      if (r.status == 0 || r.status == 3) {  // 3: finished, a gap short of rel_tol (still timed)
        const double cpu = r.cpu / cpu_divisor;
        actual_text = fmt::format("{:.3g} s{}", cpu, it != given.end() ? " (given)" : "");
        wall_text = it != given.end() ? std::string("-") : fmt::format("{:.3g} s", r.wall);
        const double ratio = est / cpu;
        ratio_text = fmt::format("{:.2f}", ratio);
        const bool ok = ratio >= 0.5 && ratio <= 2.0 && spread <= 0.2;
        result = ok ? "PASS" : "FAIL";
        (ok ? pass : fail)++;
      } else {
        actual_text = fmt::format("status {}", r.status);
        result = "FAIL";
        ++fail;
      }
    } else {
      not_run.push_back(c.filename().string());
    }
    fmt::print("{:<36} {:>9} {:>9} {:>9} {:>5.0f}% {:>9} {:>9} {:>6} {:>6}  {}\n",
               c.filename().string(), fmt::format("{:.3g} s", e[0]), fmt::format("{:.3g} s", e[1]),
               fmt::format("{:.3g} s", e[2]), 100.0 * spread, actual_text, wall_text, ratio_text,
               result, load_average());
    std::fflush(stdout);
  }
  fmt::print("{} PASS, {} FAIL (ratio = median estimate / actual in [0.5, 2], spread <= 20 %)\n",
             pass, fail);
  if (!not_run.empty()) {
    std::string names;
    for (const auto& n : not_run) names += (names.empty() ? "" : ", ") + n;
    fmt::print("not run (an estimate above --max-run {:.0f} s on {} thread{}): {}\n", max_run,
               runs_on, runs_on == 1 ? "" : "s", names);
  }
  fmt::print("load average at the end: {}\n", load_average());
  std::error_code ec;
  fs::remove_all(tmp, ec);
  return fail == 0 ? 0 : 1;
}
