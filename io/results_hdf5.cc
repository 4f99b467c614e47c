#include "io/results_hdf5.h"

#include <H5Cpp.h>
#include <fcntl.h>
#include <fmt/format.h>
#include <signal.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <ctime>
#include <limits>
#include <set>
#include <system_error>
#include <vector>

#include "io/errors.h"
#include "io/hdf5_helpers.h"
#include "roundtrip/version.h"

namespace roundtrip::io {
namespace {

// The live writer's temporary path, for remove_pending_results_file() (a fixed buffer: signal
// handlers may not allocate).
char g_pending_path[4096] = {0};

using h5::attr;
using h5::utf8_string_type;
using h5::vector_dataset;

void text_dataset(H5::Group& g, const std::string& name, const std::string& text) {
  const H5::StrType t = utf8_string_type();
  H5::DataSet ds = g.createDataSet(name, t, H5::DataSpace(H5S_SCALAR));
  ds.write(text, t);
}

template <class F>
std::vector<double> column(const RunResult& r, F f) {
  std::vector<double> out;
  out.reserve(r.points.size());
  for (const auto& p : r.points) out.push_back(f(p));
  return out;
}

// File-level attributes and /input (the same with and without a scan).
void write_common(H5::H5File& file, const ResultsInfo& info) {
  attr(file, "format", std::string(kResultsFormatName));
  attr(file, "format_version", kResultsFormatVersion);
  attr(file, "roundtrip_version", std::string(kVersion));
  attr(file, "git_commit", std::string(kGitCommit));
  attr(file, "created_utc", iso8601_utc_now());
  attr(file, "title", info.title);
  H5::Group input = file.createGroup("input");
  text_dataset(input, "case_file", info.case_text);
  {
    H5::DataSet ds = input.openDataSet("case_file");
    attr(ds, "path", info.case_path);
  }
}

void write_theta(H5::Group& res, const RunResult& r) {
  const std::pair<const char*, const ThetaFit*> fits[] = {
      {"energy", &r.theta_energy}, {"force", &r.theta_force}, {"gradient", &r.theta_gradient}};
  bool any = false;
  for (const auto& [name, fit] : fits) any = any || fit->valid;
  if (!any) return;
  H5::Group g = res.createGroup("pfa_theta");
  attr(
      g, "description",
      std::string("fits of Q/Q_PFA = 1 + theta L/R + ... over the sweep (solver/pfa/theta_fit.h)"));
  for (const auto& [name, fit] : fits) {
    if (!fit->valid) continue;
    H5::Group f = g.createGroup(name);
    attr(f, "theta", fit->theta);
    attr(f, "theta2", fit->theta2);
    attr(f, "uncertainty", fit->uncertainty);
    attr(f, "points", fit->points);
    attr(f, "x_min", fit->x_min);
    attr(f, "x_max", fit->x_max);
    attr(f, "model", fit->model);
    if (!fit->note.empty()) attr(f, "note", fit->note);
  }
}

// One run (all gaps) into `file` (no scan) or into /scan/<k>.
void write_run(H5::Group& file, const RunResult& r, const ResultsInfo& info) {
  const ScaleUnits u = scale_units(r.scale);
  const Quantities& q = info.quantities;

  attr(file, "threads", r.threads);
  attr(file, "wall_time_s", r.wall_seconds);
  attr(file, "geometry", r.kind);
  attr(file, "description", r.description);
  attr(file, "result_scale", to_string(r.scale));
  attr(file, "per_area", r.scale == ResultScale::kPerArea ? 1 : 0);  // kept for older readers
  for (const auto& [name, metres] : info.body_lengths) attr(file, name, metres);
  for (const auto& [name, text] : info.body_texts) attr(file, name, text);
  for (const auto& [name, value] : info.body_numbers) attr(file, name, value);
  if (r.pfa_length > 0.0) attr(file, "pfa_length_m", r.pfa_length);
  attr(file, "temperature_K", info.temperature_K);
  if (info.ionic_strength > 0.0) {  // an electrolyte medium (solver/planar/electrolyte.h)
    attr(file, "ionic_strength", info.ionic_strength);
    attr(file, "ionic_strength_units", std::string("mol/m^3"));
    attr(file, "debye_length", info.debye_length);
    attr(file, "debye_length_units", std::string("m"));
  }
  attr(file, "rel_tol", info.rel_tol);
  attr(file, "frequency_rule", info.frequency_rule);
  attr(file, "complete", info.complete ? 1 : 0);
  attr(file, "gaps_planned",
       info.gaps_planned > 0 ? info.gaps_planned : static_cast<int>(r.points.size()));

  H5::Group res = file.createGroup("results");
  vector_dataset(res, "gap", column(r, [](auto& p) { return p.gap; }), "m",
                 "surface-to-surface gap L");
  if (q.energy) {
    vector_dataset(res, "energy", column(r, [](auto& p) { return p.energy; }), u.energy,
                   "energy (T = 0) or free energy (T > 0); < 0 is attraction");
    vector_dataset(res, "energy_error", column(r, [](auto& p) { return p.energy_error; }), u.energy,
                   "estimated absolute error of energy");
    for (const int power : info.energy_gap_powers)
      vector_dataset(res, fmt::format("energy_gap{}", power),
                     column(r, [&](auto& p) { return std::pow(p.gap, power) * p.energy; }),
                     fmt::format("{} m^{}", u.energy, power),
                     fmt::format("gap^{} times energy (atom-plate: z^{} U(z))", power, power));
  }
  if (q.force || q.gradient)
    vector_dataset(res, "force", column(r, [](auto& p) { return p.force; }), u.force,
                   "force F = -dE/dL; < 0 is attraction");
  if (q.gradient)
    vector_dataset(res, "gradient", column(r, [](auto& p) { return p.gradient; }), u.gradient,
                   "force gradient dF/dL = -d2E/dL2");
  std::vector<int> converged;
  for (const auto& p : r.points) converged.push_back(p.frequencies.converged ? 1 : 0);
  {
    const hsize_t n = converged.size();
    H5::DataSet ds = res.createDataSet("converged", H5::PredType::NATIVE_INT, H5::DataSpace(1, &n));
    if (n > 0) ds.write(converged.data(), H5::PredType::NATIVE_INT);
    attr(ds, "units", std::string("1"));
    attr(ds, "description", std::string("1 if the frequency rule met rel_tol at this gap"));
  }
  vector_dataset(res, "wall_time_s", column(r, [](auto& p) { return p.wall_seconds; }), "s",
                 "wall time spent on this gap");

  bool any_pfa = false;
  for (const auto& p : r.points) any_pfa = any_pfa || p.pfa.has_value();
  if (any_pfa) {
    constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
    const auto pfa_of = [&](auto get) {
      return column(r, [&](const PointResult& p) { return p.pfa ? get(*p.pfa) : kNaN; });
    };
    const auto ratio = [](const std::vector<double>& a, const std::vector<double>& b) {
      std::vector<double> out(a.size());
      for (std::size_t i = 0; i < a.size(); ++i) out[i] = a[i] / b[i];
      return out;
    };
    const auto e = column(r, [](auto& p) { return p.energy; });
    const auto f = column(r, [](auto& p) { return p.force; });
    const auto g = column(r, [](auto& p) { return p.gradient; });
    const auto ep = pfa_of([](const PfaValues& v) { return v.energy; });
    const auto fp = pfa_of([](const PfaValues& v) { return v.force; });
    const auto gp = pfa_of([](const PfaValues& v) { return v.gradient; });
    if (q.energy) {
      vector_dataset(res, "energy_pfa", ep, u.energy, "proximity force approximation of energy");
      vector_dataset(res, "energy_ratio", ratio(e, ep), "1", "energy / energy_pfa");
    }
    if (q.force || q.gradient) {
      vector_dataset(res, "force_pfa", fp, u.force, "proximity force approximation of force");
      vector_dataset(res, "force_ratio", ratio(f, fp), "1", "force / force_pfa");
    }
    if (q.gradient) {
      vector_dataset(res, "gradient_pfa", gp, u.gradient,
                     "proximity force approximation of gradient");
      vector_dataset(res, "gradient_ratio", ratio(g, gp), "1", "gradient / gradient_pfa");
    }
  }

  // Quantities a geometry adds (Geometry::extra_quantities, e.g. the lateral force), by name in
  // the order of the first gap; NaN where a gap lacks one.
  if (!r.points.empty())
    for (const ExtraQuantity& x : r.points.front().extra) {
      const auto v = column(r, [&](const PointResult& p) {
        for (const auto& y : p.extra)
          if (y.name == x.name) return y.value;
        return std::numeric_limits<double>::quiet_NaN();
      });
      vector_dataset(res, x.name, v, x.units, x.description);
    }

  write_theta(res, r);

  std::set<std::string> trunc_names;
  for (const auto& p : r.points)
    for (const auto& [k, v] : p.truncation) trunc_names.insert(k);
  H5::Group trunc = res.createGroup("truncation");
  for (const auto& name : trunc_names) {
    const auto v = column(r, [&](const PointResult& p) {
      const auto it = p.truncation.find(name);
      return it == p.truncation.end() ? std::numeric_limits<double>::quiet_NaN() : it->second;
    });
    vector_dataset(trunc, name, v, "1", "truncation used at each gap (NaN: not used)");
  }

  // Per-gap frequency contributions: E = sum_j weight_j s(xi_j) (see geometry.h).
  const bool zero_t = info.temperature_K == 0.0;
  const std::string s_units = u.spectral;
  H5::Group freq = file.createGroup("frequencies");
  for (std::size_t i = 0; i < r.points.size(); ++i) {
    const PointResult& p = r.points[i];
    H5::Group g = freq.createGroup(std::to_string(i));
    attr(g, "gap", p.gap);
    attr(g, "gap_units", std::string("m"));
    attr(g, "converged", p.frequencies.converged ? 1 : 0);
    attr(g, "abs_error", p.frequencies.abs_error);
    attr(g, "rule", to_string(p.frequencies.rule));
    if (p.frequencies.rule == FrequencyRuleKind::kPadeSpectrum)
      attr(g, "pade_poles", p.frequencies.pade_poles);
    attr(g, "message", p.frequencies.message);
    const auto& t = p.frequencies.terms;
    const auto col = [&](auto get) {
      std::vector<double> v;
      v.reserve(t.size());
      for (const auto& term : t) v.push_back(get(term));
      return v;
    };
    vector_dataset(g, "xi", col([](auto& x) { return x.xi; }), "rad/s", "imaginary frequency");
    // E = sum_j weight_j s_j with s in 1 (or 1/m^2) and E in J (or J/m^2): the weight is an
    // energy for both rules (at T = 0, hbar/2pi times the quadrature weight in rad/s).
    vector_dataset(g, "weight", col([](auto& x) { return x.weight; }), "J",
                   zero_t ? "hbar/(2 pi) times the quadrature weight of the node"
                          : "k_B T for a Matsubara term, k_B T eta_j for a Pade pole; k_B T/2 at "
                            "xi = 0");
    vector_dataset(g, "rel_tol", col([](auto& x) { return x.rel_tol; }), "1",
                   "relative accuracy s was computed to (looser for terms with a small share)");
    vector_dataset(g, "s", col([](auto& x) { return x.s.value; }), s_units,
                   "sum over blocks of log det(1 - M)");
    vector_dataset(g, "ds_dL", col([](auto& x) { return x.s.d1; }), u.spectral_d1,
                   "first derivative of s with respect to the gap");
    vector_dataset(g, "d2s_dL2", col([](auto& x) { return x.s.d2; }), u.spectral_d2,
                   "second derivative of s with respect to the gap");
  }
}

// "<final>.tmp.<pid>" files of processes that no longer exist (killed with -9): remove them.
void remove_stale_temporaries(const std::filesystem::path& final_path) {
  std::error_code ec;
  const auto dir =
      final_path.has_parent_path() ? final_path.parent_path() : std::filesystem::path(".");
  const std::string prefix = final_path.filename().string() + ".tmp.";
  for (const auto& e : std::filesystem::directory_iterator(dir, ec)) {
    const std::string name = e.path().filename().string();
    if (name.rfind(prefix, 0) != 0) continue;
    const std::string digits = name.substr(prefix.size());
    if (digits.empty() || digits.find_first_not_of("0123456789") != std::string::npos) continue;
    const long pid = std::strtol(digits.c_str(), nullptr, 10);
    if (pid > 0 && ::kill(static_cast<pid_t>(pid), 0) != 0 && errno == ESRCH)
      std::filesystem::remove(e.path(), ec);
  }
}

void silence_hdf5() {
  H5::Exception::dontPrint();                   // the C++ API's default error stack
  H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);  // and the C library's
}

bool is_hdf5(const std::filesystem::path& p) {
  try {
    return H5::H5File::isHdf5(p.string());
  } catch (const H5::Exception&) {
    return false;
  }
}

std::filesystem::path directory_of(const std::filesystem::path& p) {
  return p.has_parent_path() ? p.parent_path() : std::filesystem::path(".");
}

// The whole file in memory (core driver without a backing store): HDF5 never touches the disk,
// so a full device cannot fail inside HDF5 (whose C++ destructors print and, while an exception
// unwinds, crashed on the half-closed file).
std::vector<unsigned char> build_image(const std::function<void(H5::H5File&)>& fill,
                                       const std::string& name, const std::string& where) {
  silence_hdf5();
  try {
    H5::FileAccPropList fapl;
    fapl.setCore(std::size_t{1} << 20, false);
    H5::H5File file(name, H5F_ACC_TRUNC, H5::FileCreatPropList::DEFAULT, fapl);
    fill(file);
    file.flush(H5F_SCOPE_GLOBAL);
    const ssize_t n = H5Fget_file_image(file.getId(), nullptr, 0);
    if (n <= 0) throw H5::FileIException("H5Fget_file_image", "no file image");
    std::vector<unsigned char> image(static_cast<std::size_t>(n));
    if (H5Fget_file_image(file.getId(), image.data(), image.size()) != n)
      throw H5::FileIException("H5Fget_file_image", "file image changed size");
    file.close();
    return image;
  } catch (const H5::Exception& e) {
    throw StorageError(
        fmt::format("{}: building the HDF5 file in memory failed: {}", where, e.getDetailMsg()),
        EIO);
  }
}

// write() the bytes to `path`, fsync and close it; on any failure remove it and throw the errno.
void write_durably(const std::filesystem::path& path, const std::vector<unsigned char>& bytes,
                   const std::string& where) {
  const auto failed = [&](const char* step, int e) {
    std::error_code ec;
    std::filesystem::remove(path, ec);
    return StorageError(
        fmt::format("{}: {} the results file failed: {}; any older results file and the "
                    "checkpoint journal are kept as they were{}",
                    where, step, write_failure_reason(e, directory_of(path).string()),
                    e == ENOSPC || e == EDQUOT
                        ? "; free some space and run the same command again: it resumes from "
                          "the journal"
                        : ""),
        e);
  };
  const FileWriteFailure f = write_file_synced(
      path, std::string_view(reinterpret_cast<const char*>(bytes.data()), bytes.size()));
  if (f.step) throw failed(f.step, f.error);
}

// After a rename, fsync the directory so that the new name survives a power loss.
void sync_directory(const std::filesystem::path& dir) {
  const int fd = ::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) return;
  ::fsync(fd);  // best effort: the file itself is already on disk
  ::close(fd);
}

int gaps_in(const H5::Group& g) {
  if (!g.nameExists("results") || !g.nameExists("results/gap")) return 0;
  const H5::DataSet ds = g.openDataSet("results/gap");
  hsize_t n = 0;
  ds.getSpace().getSimpleExtentDims(&n);
  return static_cast<int>(n);
}

int int_attr(const H5::H5Object& obj, const std::string& name, int fallback) {
  if (!obj.attrExists(name)) return fallback;
  int v = fallback;
  obj.openAttribute(name).read(H5::PredType::NATIVE_INT, &v);
  return v;
}

}  // namespace

ExistingResults read_existing_results(const std::filesystem::path& path) {
  ExistingResults out;
  silence_hdf5();
  if (!is_hdf5(path)) return out;
  try {
    H5::H5File file(path.string(), H5F_ACC_RDONLY);
    if (!file.attrExists("format")) return out;
    std::string format;
    const H5::Attribute a = file.openAttribute("format");
    a.read(a.getStrType(), format);
    if (format != kResultsFormatName) return out;
    out.complete = int_attr(file, "complete", 0) == 1;
    if (file.attrExists("scan_points")) {
      if (file.nameExists("scan")) {
        const H5::Group scan = file.openGroup("scan");
        for (hsize_t i = 0; i < scan.getNumObjs(); ++i)
          out.finished_gaps += gaps_in(scan.openGroup(scan.getObjnameByIdx(i)));
      }
    } else {
      out.finished_gaps = gaps_in(file);
    }
    out.readable = true;
  } catch (const H5::Exception&) {
    out = ExistingResults{};
  }
  return out;
}

std::filesystem::path partial_results_path(const std::filesystem::path& final_path) {
  const std::string ext = final_path.has_extension() ? final_path.extension().string() : ".h5";
  std::filesystem::path p = final_path;
  p.replace_filename(final_path.stem().string() + ".partial" + ext);
  return p;
}

std::string iso8601_utc_now() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm utc{};
  gmtime_r(&now, &utc);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return buf;
}

ResultsWriter::ResultsWriter(std::filesystem::path final_path, std::string field)
    : final_(std::move(final_path)), field_(std::move(field)) {
  const auto fail = [&](const std::string& why) {
    return CaseError(fmt::format("{} = \"{}\": cannot write the results file: {}", field_,
                                 final_.string(), why));
  };
  if (final_.empty()) throw fail("empty path");
  std::error_code ec;
  if (std::filesystem::is_directory(final_, ec)) throw fail("it is a directory");
  silence_hdf5();
  // Never clobber something else (a typo such as `-o case.toml`): only HDF5 files are replaced.
  if (std::filesystem::exists(final_, ec) && !is_hdf5(final_))
    throw fail("a file that is not HDF5 exists there; not overwriting it");
  const auto dir = directory_of(final_);
  if (!std::filesystem::is_directory(dir, ec))
    throw fail(fmt::format("directory \"{}\" does not exist", dir.string()));
  remove_stale_temporaries(final_);
  temp_ = final_;
  temp_ += fmt::format(".tmp.{}", static_cast<long>(getpid()));
  const std::string t = temp_.string();
  if (t.size() < sizeof g_pending_path) {
    g_pending_path[0] = '\0';
    std::copy(t.begin(), t.end(), g_pending_path);
    g_pending_path[t.size()] = '\0';
  }
  // The probe is a plain open(): its errno tells a read-only file system from a missing
  // permission or a full device.
  const int fd = ::open(temp_.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd < 0) {
    const int e = errno;
    g_pending_path[0] = '\0';
    const std::string why = write_failure_reason(e, dir.string());
    if (e == ENOSPC || e == EDQUOT)
      throw StorageError(fmt::format("{} = \"{}\": cannot write the results file: {}", field_,
                                     final_.string(), why),
                         e);
    throw fail(why);
  }
  ::close(fd);
}

void remove_pending_results_file() noexcept {
  if (g_pending_path[0] != '\0') unlink(g_pending_path);
}

ResultsWriter::~ResultsWriter() {
  g_pending_path[0] = '\0';
  if (!committed_) {
    std::error_code ec;
    std::filesystem::remove(temp_, ec);
  }
}

CommitOutcome ResultsWriter::commit(const RunResult& result, const ResultsInfo& info) {
  return write(
      [&](H5::H5File& file) {
        write_common(file, info);
        write_run(file, result, info);
      },
      info.complete, static_cast<int>(result.points.size()));
}

CommitOutcome ResultsWriter::commit_scan(const std::vector<ScanRunResult>& runs,
                                         const ResultsInfo& common, int points_planned) {
  bool complete = static_cast<int>(runs.size()) == points_planned;
  int finished = 0;
  double wall = 0.0;
  for (const auto& run : runs) {
    complete = complete && run.info.complete;
    finished += static_cast<int>(run.result.points.size());
    wall += run.result.wall_seconds;
  }
  return write(
      [&](H5::H5File& file) {
        write_common(file, common);
        attr(file, "scan_points", points_planned);
        attr(file, "scan_points_written", static_cast<int>(runs.size()));
        std::string keys;
        if (!runs.empty())
          for (const auto& [k, v] : runs.front().parameters) keys += (keys.empty() ? "" : ", ") + k;
        attr(file, "scan_keys", keys);
        attr(file, "complete", complete ? 1 : 0);
        attr(file, "wall_time_s", wall);
        H5::Group scan = file.createGroup("scan");
        for (std::size_t i = 0; i < runs.size(); ++i) {
          H5::Group g = scan.createGroup(std::to_string(i));
          std::string label;
          for (const auto& [k, v] : runs[i].parameters) {
            attr(g, "scan." + k, v);
            label += (label.empty() ? "" : ", ") + k + " = " + v;
          }
          attr(g, "scan_label", label);
          write_run(g, runs[i].result, runs[i].info);
        }
      },
      complete, finished);
}

CommitOutcome ResultsWriter::write(const std::function<void(H5::H5File&)>& fill, bool complete,
                                   int finished_gaps) {
  const std::string where = fmt::format("{} = \"{}\"", field_, final_.string());
  const std::vector<unsigned char> image = build_image(fill, temp_.string() + ".image", where);

  CommitOutcome outcome;
  outcome.written = final_;
  std::error_code ec;
  if (!complete && std::filesystem::exists(final_, ec)) {
    outcome.existing = read_existing_results(final_);
    const ExistingResults& old = outcome.existing;
    if (!old.readable || old.complete || old.finished_gaps > finished_gaps) {
      outcome.written = partial_results_path(final_);
      outcome.kept_existing = true;
      if (std::filesystem::exists(outcome.written, ec) && !is_hdf5(outcome.written))
        throw StorageError(
            fmt::format("{}: the partial results were not written: a file that is not HDF5 "
                        "exists at \"{}\" and is not overwritten (the checkpoint journal keeps "
                        "every finished frequency)",
                        where, outcome.written.string()),
            EEXIST);
    }
  }
  write_durably(temp_, image, where);
  if (::rename(temp_.c_str(), outcome.written.c_str()) != 0) {
    const int e = errno;
    std::filesystem::remove(temp_, ec);
    throw StorageError(fmt::format("{}: could not move the finished file into place: {}", where,
                                   write_failure_reason(e, directory_of(outcome.written).string())),
                       e);
  }
  committed_ = true;
  g_pending_path[0] = '\0';
  sync_directory(directory_of(outcome.written));
  if (complete) {
    const auto partial = partial_results_path(final_);
    if (std::filesystem::exists(partial, ec) && read_existing_results(partial).readable)
      outcome.removed_partial = std::filesystem::remove(partial, ec);
  }
  return outcome;
}

void amend_results_file(const std::filesystem::path& path,
                        const std::function<void(H5::H5File&)>& modify, const std::string& field) {
  const std::string where = fmt::format("{} = \"{}\"", field, path.string());
  if (!read_existing_results(path).readable)
    throw CaseError(where + ": not a roundtrip results file (or not readable)");
  silence_hdf5();
  std::vector<unsigned char> image;
  try {
    H5::FileAccPropList fapl;
    fapl.setCore(std::size_t{1} << 20, false);  // the whole file in memory; the disk untouched
    H5::H5File file(path.string(), H5F_ACC_RDWR, H5::FileCreatPropList::DEFAULT, fapl);
    modify(file);
    file.flush(H5F_SCOPE_GLOBAL);
    const ssize_t n = H5Fget_file_image(file.getId(), nullptr, 0);
    if (n <= 0) throw H5::FileIException("H5Fget_file_image", "no file image");
    image.resize(static_cast<std::size_t>(n));
    if (H5Fget_file_image(file.getId(), image.data(), image.size()) != n)
      throw H5::FileIException("H5Fget_file_image", "file image changed size");
    file.close();
  } catch (const H5::Exception& e) {
    throw StorageError(fmt::format("{}: changing the HDF5 file in memory failed: {}; the file is "
                                   "kept as it was",
                                   where, e.getDetailMsg()),
                       EIO);
  }
  std::filesystem::path temp = path;
  temp += fmt::format(".tmp.{}", static_cast<long>(getpid()));
  try {
    write_durably(temp, image, where);
  } catch (const StorageError& e) {  // the run's wording (journal, resume) does not apply here
    throw StorageError(
        fmt::format("{}: writing the changed file failed: {}; the file is kept as "
                    "it was",
                    where, write_failure_reason(e.error_number(), directory_of(path).string())),
        e.error_number());
  }
  if (::rename(temp.c_str(), path.c_str()) != 0) {
    const int e = errno;
    std::error_code ec;
    std::filesystem::remove(temp, ec);
    throw StorageError(fmt::format("{}: could not move the changed file into place: {}", where,
                                   write_failure_reason(e, directory_of(path).string())),
                       e);
  }
  sync_directory(directory_of(path));
}

}  // namespace roundtrip::io
