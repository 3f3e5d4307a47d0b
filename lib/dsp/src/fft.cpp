// FFTW3 (single precision) behind RealFft / ComplexFft, and process-wide wisdom files.
// Planning, plan destruction and wisdom I/O go through one mutex: only fftwf_execute is
// thread-safe in FFTW.
#include "tonewarden/dsp/fft.h"

#include <fftw3.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <mutex>
#include <sys/stat.h>

namespace tonewarden::dsp {
namespace {

std::mutex& planner_mutex() {
  static std::mutex mutex;
  return mutex;
}

std::atomic<bool> g_wisdom_loaded{false};

// FFTW's complex type is float[2], layout-compatible with std::complex<float>.
static_assert(sizeof(fftwf_complex) == sizeof(std::complex<float>));

const char* planning_name(FftPlanning planning) {
  switch (planning) {
    case FftPlanning::kAuto: return "auto";
    case FftPlanning::kEstimate: return "estimate";
    case FftPlanning::kMeasure: return "measure";
  }
  return "?";
}

// Makes a plan with the flags `planning` asks for. Caller holds planner_mutex().
// kAuto uses measured plans only if they come straight from loaded wisdom, so start-up
// never spends seconds measuring.
template <typename MakePlan>
fftwf_plan plan_with(FftPlanning planning, MakePlan make) {
  switch (planning) {
    case FftPlanning::kEstimate:
      return make(FFTW_ESTIMATE);
    case FftPlanning::kMeasure:
      return make(FFTW_MEASURE);
    case FftPlanning::kAuto:
      if (g_wisdom_loaded.load()) {
        if (fftwf_plan p = make(FFTW_MEASURE | FFTW_WISDOM_ONLY)) return p;
      }
      return make(FFTW_ESTIMATE);
  }
  return nullptr;
}

base::Error fft_error(const char* what, size_t n, FftPlanning planning) {
  return base::make_error(base::ErrorCode::kInternal,
                          std::string(what) + " of length " + std::to_string(n) + " (planning " +
                              planning_name(planning) + ") failed");
}

}  // namespace

// ---------------------------------------------------------------- wisdom

base::Status FftWisdom::load(const std::string& path, bool* loaded) {
  if (loaded) *loaded = false;
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) {
    if (errno == ENOENT) return base::Status::success();
    return base::errno_error(base::ErrorCode::kIo, "reading FFT wisdom " + path, errno);
  }
  int ok = 0;
  {
    std::lock_guard lock(planner_mutex());
    ok = fftwf_import_wisdom_from_filename(path.c_str());
  }
  if (!ok) {
    return base::make_error(base::ErrorCode::kCorruptData,
                            "reading FFT wisdom " + path + ": not a valid FFTW float wisdom file");
  }
  g_wisdom_loaded.store(true);
  if (loaded) *loaded = true;
  return base::Status::success();
}

base::Status FftWisdom::save(const std::string& path) {
  // Write beside the target, then rename: a crash never leaves a truncated wisdom file.
  const std::string tmp = path + ".tmp." + std::to_string(::getpid());
  int ok = 0;
  {
    std::lock_guard lock(planner_mutex());
    errno = 0;
    ok = fftwf_export_wisdom_to_filename(tmp.c_str());
  }
  if (!ok) {
    const int err = errno != 0 ? errno : EIO;
    std::remove(tmp.c_str());
    return base::errno_error(base::ErrorCode::kIo, "writing FFT wisdom " + tmp, err);
  }
  if (std::rename(tmp.c_str(), path.c_str()) != 0) {
    const int err = errno;
    std::remove(tmp.c_str());
    return base::errno_error(base::ErrorCode::kIo, "renaming FFT wisdom to " + path, err);
  }
  return base::Status::success();
}

bool FftWisdom::any_loaded() noexcept { return g_wisdom_loaded.load(); }

// ---------------------------------------------------------------- RealFft

struct RealFft::Impl {
  size_t n = 0;
  float* in = nullptr;
  fftwf_complex* out = nullptr;
  fftwf_plan plan = nullptr;

  ~Impl() {
    std::lock_guard lock(planner_mutex());
    if (plan) fftwf_destroy_plan(plan);
    fftwf_free(in);
    fftwf_free(out);
  }
};

base::Result<RealFft> RealFft::create(size_t n, FftPlanning planning) {
  if (n < 2) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "real FFT length " + std::to_string(n) + " is too short (need >= 2)");
  }
  if (n > static_cast<size_t>(INT32_MAX)) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "real FFT length " + std::to_string(n) + " exceeds 2^31-1");
  }
  auto impl = std::make_unique<Impl>();
  impl->n = n;
  const size_t bins = n / 2 + 1;
  {
    std::lock_guard lock(planner_mutex());
    impl->in = fftwf_alloc_real(n);
    impl->out = fftwf_alloc_complex(bins);
    if (impl->in && impl->out) {
      impl->plan = plan_with(planning, [&](unsigned flags) {
        return fftwf_plan_dft_r2c_1d(static_cast<int>(n), impl->in, impl->out, flags);
      });
    }
  }
  if (!impl->in || !impl->out) return fft_error("allocating real FFT buffers", n, planning);
  if (!impl->plan) return fft_error("planning real FFT", n, planning);
  // Measuring scribbles over the buffers; start from a clean state.
  std::memset(impl->in, 0, n * sizeof(float));
  std::memset(impl->out, 0, bins * sizeof(fftwf_complex));
  return RealFft(std::move(impl));
}

RealFft::RealFft(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
RealFft::RealFft(RealFft&&) noexcept = default;
RealFft& RealFft::operator=(RealFft&&) noexcept = default;
RealFft::~RealFft() = default;

size_t RealFft::length() const noexcept { return impl_->n; }

std::span<float> RealFft::input() noexcept { return {impl_->in, impl_->n}; }

std::span<const std::complex<float>> RealFft::output() const noexcept {
  return {reinterpret_cast<const std::complex<float>*>(impl_->out), impl_->n / 2 + 1};
}

void RealFft::execute() noexcept { fftwf_execute(impl_->plan); }

// ---------------------------------------------------------------- ComplexFft

struct ComplexFft::Impl {
  size_t n = 0;
  fftwf_complex* in = nullptr;
  fftwf_complex* out = nullptr;
  fftwf_plan plan = nullptr;

  ~Impl() {
    std::lock_guard lock(planner_mutex());
    if (plan) fftwf_destroy_plan(plan);
    fftwf_free(in);
    fftwf_free(out);
  }
};

base::Result<ComplexFft> ComplexFft::create(size_t n, Direction direction, FftPlanning planning) {
  if (n < 2) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "complex FFT length " + std::to_string(n) + " is too short (need >= 2)");
  }
  if (n > static_cast<size_t>(INT32_MAX)) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "complex FFT length " + std::to_string(n) + " exceeds 2^31-1");
  }
  auto impl = std::make_unique<Impl>();
  impl->n = n;
  const int sign = direction == Direction::kForward ? FFTW_FORWARD : FFTW_BACKWARD;
  {
    std::lock_guard lock(planner_mutex());
    impl->in = fftwf_alloc_complex(n);
    impl->out = fftwf_alloc_complex(n);
    if (impl->in && impl->out) {
      impl->plan = plan_with(planning, [&](unsigned flags) {
        return fftwf_plan_dft_1d(static_cast<int>(n), impl->in, impl->out, sign, flags);
      });
    }
  }
  if (!impl->in || !impl->out) return fft_error("allocating complex FFT buffers", n, planning);
  if (!impl->plan) return fft_error("planning complex FFT", n, planning);
  std::memset(impl->in, 0, n * sizeof(fftwf_complex));
  std::memset(impl->out, 0, n * sizeof(fftwf_complex));
  return ComplexFft(std::move(impl));
}

ComplexFft::ComplexFft(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
ComplexFft::ComplexFft(ComplexFft&&) noexcept = default;
ComplexFft& ComplexFft::operator=(ComplexFft&&) noexcept = default;
ComplexFft::~ComplexFft() = default;

size_t ComplexFft::length() const noexcept { return impl_->n; }

std::span<std::complex<float>> ComplexFft::input() noexcept {
  return {reinterpret_cast<std::complex<float>*>(impl_->in), impl_->n};
}

std::span<const std::complex<float>> ComplexFft::output() const noexcept {
  return {reinterpret_cast<const std::complex<float>*>(impl_->out), impl_->n};
}

void ComplexFft::execute() noexcept { fftwf_execute(impl_->plan); }

}  // namespace tonewarden::dsp
