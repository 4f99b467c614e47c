// MPI runs (mpi.h). Only rank 0's main thread and each rank's main thread call MPI (funneled);
// compute slots are std::threads with their own OpenMP teams.
#include "solver/parallel/mpi.h"

#include <fmt/format.h>
#include <omp.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <climits>
#include <condition_variable>
#include <cstdlib>
#include <cstring>
#include <deque>
#include <iostream>
#include <mutex>
#include <optional>
#include <stdexcept>
#include <thread>

#include "solver/guards.h"

#ifdef ROUNDTRIP_USE_MPI
#include <mpi.h>
#endif

namespace roundtrip::parallel {
namespace {

Session* g_current = nullptr;

const char* kNotBuilt =
    "this roundtrip was built without MPI: configure with -DROUNDTRIP_USE_MPI=ON (Debian: "
    "libopenmpi-dev, openmpi-bin) to spread a run over MPI ranks";

bool env_set(const char* name) {
  const char* v = std::getenv(name);
  return v && *v;
}

}  // namespace

bool mpi_built() {
#ifdef ROUNDTRIP_USE_MPI
  return true;
#else
  return false;
#endif
}

bool launched_by_mpi() {
  return env_set("OMPI_COMM_WORLD_SIZE") || env_set("PMIX_RANK") || env_set("PMI_RANK") ||
         env_set("PMI_SIZE");
}

int launched_world_size() {
  for (const char* name : {"OMPI_COMM_WORLD_SIZE", "PMI_SIZE", "SLURM_STEP_NUM_TASKS"}) {
    if (std::string(name) == "SLURM_STEP_NUM_TASKS" && !launched_by_mpi()) continue;
    if (const char* v = std::getenv(name); v && *v) return std::max(1, std::atoi(v));
  }
  return 1;
}

std::string not_built_text() { return kNotBuilt; }

Session* Session::current() { return g_current; }

std::string Session::where(int rank) const {
  return fmt::format("rank {} of {}{}", rank, size_,
                     host_.empty() ? std::string() : fmt::format(" ({})", hosts_.at(rank)));
}

#ifndef ROUNDTRIP_USE_MPI

Session::Session(int*, char***) { g_current = this; }
Session::~Session() {
  if (g_current == this) g_current = nullptr;
}
void Session::agree_setup(std::uint64_t) {}
int Session::finish(int status, const std::string& error) {
  if (!error.empty()) std::cerr << "roundtrip: error: " << error << "\n";
  return status;
}
void Session::abort_all(const std::string& message, int status, bool) {
  std::cerr << "roundtrip: error: " << message << "\n";
  if (before_abort_) before_abort_();
  std::_Exit(status);
}
int Session::agree(int status, const std::string&, std::uint64_t, bool) { return status; }
std::vector<RunResult> run_sweeps_distributed(const std::vector<SweepInput>&, int,
                                              DistributedStats*, const RoundProgress*) {
  throw std::runtime_error(kNotBuilt);
}

#else  // ROUNDTRIP_USE_MPI

namespace {

enum Tag : int {
  kReady = 1,      // worker -> 0: int, compute slots free
  kTask = 2,       // 0 -> worker: double[9 + 2n] {id, kind, point, gap, xi, rel_tol, begin,
                   // end, stride, then n Bloch nodes (p, q)}
  kResult = 3,     // worker -> 0: bytes, encode_result
  kStop = 4,       // 0 -> worker: int, 1 if the run was interrupted
  kFailed = 5,     // worker -> 0: chars, the error
  kCancelled = 6,  // worker -> 0: a signal reached this rank
  kBye = 7,        // worker -> 0: stopped, nothing more will come
  kSetupMsg = 8,   // failing rank -> 0: chars, its set-up error
};

constexpr int kHostChars = 64;
constexpr int kTaskDoubles = 9;

// A task's value as bytes (MPI_BYTE; every rank runs the same program on the same kind of
// machine): id, s, present, seconds, then the chunk of a block task (m blocks or k_z nodes).
class Bytes {
 public:
  template <class T>
  void put(const T& v) {
    const char* p = reinterpret_cast<const char*>(&v);
    b_.insert(b_.end(), p, p + sizeof(T));
  }
  void put_text(const std::string& t) {
    put(static_cast<std::uint64_t>(t.size()));
    b_.insert(b_.end(), t.begin(), t.end());
  }
  std::vector<char>& data() { return b_; }

 private:
  std::vector<char> b_;
};

class Reader {
 public:
  explicit Reader(const std::vector<char>& b) : b_(b) {}
  template <class T>
  T get() {
    if (at_ + sizeof(T) > b_.size()) throw std::runtime_error("a task result message is short");
    T v;
    std::memcpy(&v, b_.data() + at_, sizeof(T));
    at_ += sizeof(T);
    return v;
  }
  std::string get_text() {
    const auto n = get<std::uint64_t>();
    if (at_ + n > b_.size()) throw std::runtime_error("a task result message is short");
    std::string t(b_.data() + at_, n);
    at_ += n;
    return t;
  }

 private:
  const std::vector<char>& b_;
  std::size_t at_ = 0;
};

std::vector<char> encode_result(int id, const TaskValue& v) {
  Bytes b;
  b.put(id);
  b.put(v.s);
  b.put(static_cast<int>(v.present));
  b.put(v.seconds);
  const blocks::Chunk& c = v.chunk;
  b.put(c.begin);
  b.put(c.end);
  b.put(static_cast<int>(c.sum));
  b.put(static_cast<int>(c.seen));
  b.put(c.mlimit);
  b.put(static_cast<int>(c.fixed_m_max));
  b.put(static_cast<int>(c.order));
  b.put(c.tol);
  b.put(c.min_level);
  b.put(c.factor);
  b.put(c.failed_at);
  b.put_text(c.failure);
  b.put(c.bloch_components);
  b.put(static_cast<std::uint64_t>(c.bloch_values.size()));
  for (double x : c.bloch_values) b.put(x);
  b.put(static_cast<std::uint64_t>(c.values.size()));
  for (const Spectral& x : c.values) b.put(x);
  b.put(static_cast<std::uint64_t>(v.shared.size()));
  for (const Spectral& x : v.shared) b.put(x);
  return std::move(b.data());
}

TaskValue decode_result(const std::vector<char>& bytes, int* id) {
  Reader r(bytes);
  TaskValue v;
  *id = r.get<int>();
  v.s = r.get<Spectral>();
  v.present = r.get<int>() != 0;
  v.seconds = r.get<double>();
  blocks::Chunk& c = v.chunk;
  c.begin = r.get<int>();
  c.end = r.get<int>();
  c.sum = static_cast<blocks::BlockSum>(r.get<int>());
  c.seen = r.get<int>() != 0;
  c.mlimit = r.get<int>();
  c.fixed_m_max = r.get<int>() != 0;
  c.order = static_cast<DerivativeOrder>(r.get<int>());
  c.tol = r.get<double>();
  c.min_level = r.get<int>();
  c.factor = r.get<double>();
  c.failed_at = r.get<int>();
  c.failure = r.get_text();
  c.bloch_components = r.get<int>();
  c.bloch_values.resize(r.get<std::uint64_t>());
  for (double& x : c.bloch_values) x = r.get<double>();
  c.values.resize(r.get<std::uint64_t>());
  for (Spectral& x : c.values) x = r.get<Spectral>();
  v.shared.resize(r.get<std::uint64_t>());
  for (Spectral& x : v.shared) x = r.get<Spectral>();
  return v;
}

// Waiting without burning a core that an oversubscribed rank may need: spin briefly, then sleep
// up to 1 ms between polls.
void backoff(int& idle) {
  if (idle < 64)
    std::this_thread::yield();
  else
    std::this_thread::sleep_for(std::chrono::microseconds(std::min(1000, 10 * (idle - 63))));
  ++idle;
}

void wait_polling(MPI_Request* request) {
  int done = 0, idle = 0;
  for (;;) {
    MPI_Test(request, &done, MPI_STATUS_IGNORE);
    if (done) return;
    backoff(idle);
  }
}

double seconds_since(std::chrono::steady_clock::time_point t0) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

// The compute slots of one rank: threads that take tasks from an inbox and put values in an
// outbox; the rank's main thread talks MPI.
class Pool {
 public:
  struct Done {
    int id = 0;
    TaskValue value;
    int state = 0;  // 0 computed, 1 cancelled, 2 failed
    std::string error;
  };
  Pool(const std::vector<SweepInput>& inputs, int slots, int omp_threads) : inputs_(inputs) {
    for (int i = 0; i < slots; ++i)
      threads_.emplace_back([this, omp_threads] {
        omp_set_num_threads(omp_threads);
        loop();
      });
  }
  ~Pool() { join(); }
  void submit(int id, const Task& task) {
    {
      std::lock_guard<std::mutex> lock(mutex_);
      inbox_.emplace_back(id, task);
    }
    cv_.notify_one();
  }
  bool poll(Done& d) {
    std::lock_guard<std::mutex> lock(mutex_);
    if (outbox_.empty()) return false;
    d = std::move(outbox_.front());
    outbox_.pop_front();
    return true;
  }
  void join() {
    {
      std::lock_guard<std::mutex> lock(mutex_);
      stop_ = true;
    }
    cv_.notify_all();
    for (auto& t : threads_)
      if (t.joinable()) t.join();
  }

 private:
  void loop() {
    for (;;) {
      std::pair<int, Task> job;
      {
        std::unique_lock<std::mutex> lock(mutex_);
        cv_.wait(lock, [&] { return stop_ || !inbox_.empty(); });
        if (stop_) return;
        job = inbox_.front();
        inbox_.pop_front();
      }
      Done d;
      d.id = job.first;
      try {
        d.value = compute_task(inputs_, job.second);
      } catch (const Cancelled&) {
        d.state = 1;
      } catch (const std::exception& e) {
        d.state = 2;
        d.error = e.what();
      } catch (...) {
        d.state = 2;
        d.error = "an exception that is not a std::exception";
      }
      std::lock_guard<std::mutex> lock(mutex_);
      outbox_.push_back(std::move(d));
    }
  }
  const std::vector<SweepInput>& inputs_;
  std::mutex mutex_;
  std::condition_variable cv_;
  std::deque<std::pair<int, Task> > inbox_;
  std::deque<Done> outbox_;
  bool stop_ = false;
  std::vector<std::thread> threads_;
};

// The flag every compute thread of this rank polls during a run: set when this rank must stop.
std::atomic<bool> g_stop{false};

}  // namespace

Session::Session(int* argc, char*** argv) {
  g_current = this;
  if (!launched_by_mpi()) return;
  int provided = 0;
  MPI_Init_thread(argc, argv, MPI_THREAD_FUNNELED, &provided);
  distributed_ = true;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
  MPI_Comm_size(MPI_COMM_WORLD, &size_);
  char name[kHostChars] = {};
  gethostname(name, kHostChars - 1);
  host_ = name;
  std::vector<char> all(static_cast<std::size_t>(kHostChars) * size_);
  MPI_Allgather(name, kHostChars, MPI_CHAR, all.data(), kHostChars, MPI_CHAR, MPI_COMM_WORLD);
  for (int r = 0; r < size_; ++r) hosts_.emplace_back(all.data() + r * kHostChars);
}

Session::~Session() {
  if (distributed_) {
    int finalized = 0;
    MPI_Finalized(&finalized);
    if (!finalized) MPI_Finalize();
  }
  if (g_current == this) g_current = nullptr;
}

void Session::abort_all(const std::string& message, int status, bool name_rank) {
  std::cerr << "roundtrip: error: "
            << (distributed_ && name_rank ? where(rank_) + ": " : std::string()) << message
            << (distributed_ ? "; stopping every rank" : "") << std::endl;
  if (before_abort_) before_abort_();
  if (distributed_) MPI_Abort(MPI_COMM_WORLD, status);
  std::_Exit(status);
}

int Session::agree(int status, const std::string& error, std::uint64_t hash, bool have_hash) {
  int mine = status != 0 ? status : 0, worst = 0;
  std::string message = error;
  MPI_Allreduce(&mine, &worst, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
  if (worst == 0) {
    std::uint64_t lead_hash = hash;
    MPI_Bcast(&lead_hash, 1, MPI_UINT64_T, 0, MPI_COMM_WORLD);
    if (have_hash && lead_hash != hash) {
      mine = 1;
      message = fmt::format(
          "this rank read a case that differs from rank 0's (case hash {:016x}, rank 0: "
          "{:016x}): every rank must read the same case file and program version",
          hash, lead_hash);
    }
    MPI_Allreduce(&mine, &worst, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
    if (worst == 0) return 0;
  }
  int candidate = mine != 0 ? rank_ : INT_MAX, first = 0;
  MPI_Allreduce(&candidate, &first, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
  int code = mine;
  MPI_Bcast(&code, 1, MPI_INT, first, MPI_COMM_WORLD);
  if (first == 0) {
    if (lead()) std::cerr << "roundtrip: error: " << message << std::endl;
  } else if (rank_ == first) {
    MPI_Send(message.data(), static_cast<int>(message.size()), MPI_CHAR, 0, kSetupMsg,
             MPI_COMM_WORLD);
  } else if (lead()) {
    MPI_Status st;
    MPI_Probe(first, kSetupMsg, MPI_COMM_WORLD, &st);
    int n = 0;
    MPI_Get_count(&st, MPI_CHAR, &n);
    std::string text(static_cast<std::size_t>(n), '\0');
    MPI_Recv(text.data(), n, MPI_CHAR, first, kSetupMsg, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
    std::cerr << "roundtrip: error: " << where(first) << ": " << text << std::endl;
  }
  phase_ = Phase::kDone;
  return code;
}

void Session::agree_setup(std::uint64_t case_hash) {
  if (!distributed_) return;
  const int code = agree(0, "", case_hash, true);
  if (code != 0) throw StopRun{code};
}

int Session::finish(int status, const std::string& error) {
  if (!distributed_) {
    if (!error.empty()) std::cerr << "roundtrip: error: " << error << "\n";
    return status;
  }
  int out = status;
  switch (phase_) {
    case Phase::kSetup:
      out = agree(status != 0 ? status : 1, error.empty() ? "stopped before the run" : error, 0,
                  false);
      break;
    case Phase::kRunning:
      abort_all(error.empty() ? "stopped during the run" : error, status != 0 ? status : 4);
    case Phase::kSwept: {
      if (lead() && !error.empty()) std::cerr << "roundtrip: error: " << error << std::endl;
      MPI_Request request;
      MPI_Ibcast(&out, 1, MPI_INT, 0, MPI_COMM_WORLD, &request);
      wait_polling(&request);
      break;
    }
    case Phase::kDone:
      break;
  }
  MPI_Finalize();
  return out;
}

std::vector<RunResult> run_sweeps_distributed(const std::vector<SweepInput>& inputs, int threads,
                                              DistributedStats* stats,
                                              const RoundProgress* progress) {
  Session* session = Session::current();
  if (!session || !session->distributed())
    throw std::logic_error("run_sweeps_distributed needs an MPI session");
  const auto t0 = std::chrono::steady_clock::now();
  session->set_phase(Session::Phase::kRunning);
  const int rank = session->rank(), size = session->size();
  const int team = threads > 0 ? threads : omp_get_max_threads();
  bool inside = false;
  for (const auto& in : inputs) inside = inside || in.geometry->parallel_inside();
  const int slots = inside ? 1 : team, omp_threads = inside ? team : 1;
  const std::atomic<bool>* signal = inputs.empty() ? nullptr : inputs.front().options.cancel;
  g_stop = false;
  const CancelScope scope(&g_stop);
  const auto signalled = [&] { return signal && signal->load(); };

  if (rank != 0) {  // a worker: compute what rank 0 sends until it says stop
    Pool pool(inputs, slots, omp_threads);
    int free_slots = slots;
    MPI_Send(&free_slots, 1, MPI_INT, 0, kReady, MPI_COMM_WORLD);
    bool reported = false, stop = false;
    int idle = 0;
    const auto send_done = [&](const Pool::Done& d) {
      if (d.state == 0) {
        const std::vector<char> buf = encode_result(d.id, d.value);
        MPI_Send(buf.data(), static_cast<int>(buf.size()), MPI_BYTE, 0, kResult, MPI_COMM_WORLD);
      } else if (d.state == 2) {
        MPI_Send(d.error.data(), static_cast<int>(d.error.size()), MPI_CHAR, 0, kFailed,
                 MPI_COMM_WORLD);
      }
    };
    while (!stop) {
      bool any = false;
      if (!reported && signalled()) {
        g_stop = true;
        MPI_Send(nullptr, 0, MPI_INT, 0, kCancelled, MPI_COMM_WORLD);
        reported = any = true;
      }
      int flag = 0;
      MPI_Status st;
      MPI_Iprobe(0, MPI_ANY_TAG, MPI_COMM_WORLD, &flag, &st);
      if (flag) {
        any = true;
        if (st.MPI_TAG == kTask) {
          int n = 0;
          MPI_Get_count(&st, MPI_DOUBLE, &n);
          std::vector<double> b(static_cast<std::size_t>(std::max(n, kTaskDoubles)));
          MPI_Recv(b.data(), n, MPI_DOUBLE, 0, kTask, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
          Task t{static_cast<TaskKind>(static_cast<int>(b[1])),
                 static_cast<int>(b[2]),
                 static_cast<int>(b[3]),
                 b[4],
                 b[5],
                 0.0,
                 static_cast<int>(b[6]),
                 static_cast<int>(b[7]),
                 static_cast<int>(b[8])};
          // Bloch node tasks: the (p, q) pairs follow (exact in a double, < 2^53).
          for (int i = kTaskDoubles; i + 1 < n; i += 2)
            t.bloch_keys.emplace_back(static_cast<long>(b[i]), static_cast<long>(b[i + 1]));
          pool.submit(static_cast<int>(b[0]), t);
        } else {
          int interrupted = 0;
          MPI_Recv(&interrupted, 1, MPI_INT, 0, kStop, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
          if (interrupted) g_stop = true;
          stop = true;
        }
      }
      Pool::Done d;
      while (pool.poll(d)) {
        any = true;
        send_done(d);
      }
      if (any)
        idle = 0;
      else
        backoff(idle);
    }
    pool.join();
    Pool::Done d;
    while (pool.poll(d)) send_done(d);
    MPI_Send(nullptr, 0, MPI_INT, 0, kBye, MPI_COMM_WORLD);
    session->set_phase(Session::Phase::kSwept);
    return {};
  }

  // Rank 0: replay the rules, hand out tasks largest first, gather the values.
  SweepRounds rounds(inputs, size * slots);
  rounds.set_progress(progress);
  Pool pool(inputs, slots, omp_threads);
  std::vector<int> free_slots(size, 0);
  free_slots[0] = slots;
  std::vector<double> busy(size, 0.0);
  std::vector<int> done_tasks(size, 0);
  std::vector<Task> tasks;
  std::size_t next = 0;
  int outstanding = 0, byes = 0;
  bool cancel = false;
  const auto deliver = [&](int from, int id, const TaskValue& v) {
    rounds.deliver(tasks.at(id), v);
    --outstanding;
    busy[from] += v.seconds;
    ++done_tasks[from];
  };
  const auto handle = [&](const MPI_Status& st) {
    const int src = st.MPI_SOURCE;
    switch (st.MPI_TAG) {
      case kReady: {
        int n = 0;
        MPI_Recv(&n, 1, MPI_INT, src, kReady, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        free_slots[src] += n;
        break;
      }
      case kResult: {
        int n = 0;
        MPI_Get_count(&st, MPI_BYTE, &n);
        std::vector<char> bytes(static_cast<std::size_t>(n));
        MPI_Recv(bytes.data(), n, MPI_BYTE, src, kResult, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        int id = 0;
        const TaskValue v = decode_result(bytes, &id);
        deliver(src, id, v);
        ++free_slots[src];
        break;
      }
      case kFailed: {
        int n = 0;
        MPI_Get_count(&st, MPI_CHAR, &n);
        std::string text(static_cast<std::size_t>(n), '\0');
        MPI_Recv(text.data(), n, MPI_CHAR, src, kFailed, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        session->abort_all(fmt::format("{}: the solver failed: {}", session->where(src), text), 4,
                           false);
      }
      case kCancelled:
        MPI_Recv(nullptr, 0, MPI_INT, src, kCancelled, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        cancel = true;
        break;
      case kBye:
        MPI_Recv(nullptr, 0, MPI_INT, src, kBye, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        ++byes;
        break;
      default:
        session->abort_all(
            fmt::format("unexpected message (tag {}) from {}", st.MPI_TAG, session->where(src)), 4);
    }
  };
  // One pass over incoming messages and finished local tasks; true if anything happened.
  const auto poll_once = [&] {
    bool any = false;
    int flag = 0;
    MPI_Status st;
    MPI_Iprobe(MPI_ANY_SOURCE, MPI_ANY_TAG, MPI_COMM_WORLD, &flag, &st);
    if (flag) {
      handle(st);
      any = true;
    }
    Pool::Done d;
    while (pool.poll(d)) {
      any = true;
      ++free_slots[0];
      if (d.state == 0)
        deliver(0, d.id, d.value);
      else if (d.state == 1)
        --outstanding;
      else
        session->abort_all("the solver failed: " + d.error, 4);
    }
    return any;
  };
  while (!cancel) {
    tasks = rounds.next_round();
    next = 0;
    outstanding = 0;
    if (tasks.empty()) break;
    int idle = 0;
    while (next < tasks.size() || outstanding > 0) {
      if (signalled()) cancel = true;
      bool any = poll_once();
      if (cancel) break;
      while (next < tasks.size()) {
        int to = -1;
        for (int r = 1; r <= size && to < 0; ++r)
          if (free_slots[r % size] > 0) to = r % size;  // workers first, rank 0 last
        if (to < 0) break;
        const Task& t = tasks[next];
        if (to == 0) {
          pool.submit(static_cast<int>(next), t);
        } else {
          std::vector<double> b = {double(next),
                                   double(static_cast<int>(t.kind)),
                                   double(t.point),
                                   double(t.gap),
                                   t.xi,
                                   t.rel_tol,
                                   double(t.m_begin),
                                   double(t.m_end),
                                   double(t.m_stride)};
          for (const blocks::BlochKey& k : t.bloch_keys) {
            b.push_back(double(k.first));
            b.push_back(double(k.second));
          }
          MPI_Send(b.data(), static_cast<int>(b.size()), MPI_DOUBLE, to, kTask, MPI_COMM_WORLD);
        }
        --free_slots[to];
        ++outstanding;
        ++next;
        any = true;
      }
      if (any)
        idle = 0;
      else
        backoff(idle);
    }
  }
  // Stop every rank; gather what they finished before they saw it.
  if (cancel) g_stop = true;
  const int interrupted = cancel ? 1 : 0;
  for (int r = 1; r < size; ++r) MPI_Send(&interrupted, 1, MPI_INT, r, kStop, MPI_COMM_WORLD);
  int idle = 0;
  while (byes < size - 1) {
    if (poll_once())
      idle = 0;
    else
      backoff(idle);
  }
  pool.join();
  poll_once();
  std::vector<RunResult> out = rounds.results(seconds_since(t0));
  if (stats) {
    stats->ranks = size;
    stats->slots_per_rank = slots;
    stats->threads_per_slot = omp_threads;
    stats->rounds = rounds.stats();
    stats->busy_seconds = busy;
    stats->tasks = done_tasks;
    stats->wall_seconds = seconds_since(t0);
  }
  session->set_phase(Session::Phase::kSwept);
  return out;
}

#endif  // ROUNDTRIP_USE_MPI

}  // namespace roundtrip::parallel
