// Temporary-name-then-rename writing, and the interrupt clean-up.
//
// The signal handler may only use async-signal-safe calls, so pending
// temporary paths live in a fixed table of character buffers with an atomic
// "in use" flag per slot; the handler unlinks every slot in use and _exits.
#include <signal.h>
#include <unistd.h>

#include <array>
#include <atomic>
#include <cerrno>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>

#include "sillstone/error.hpp"
#include "sillstone/outputs.hpp"

namespace sillstone {
namespace {

constexpr int kSlots = 64;
constexpr std::size_t kPathMax = 4096;
std::array<std::atomic<bool>, kSlots> g_claimed{};  // slot taken by a PendingOutput
std::array<std::atomic<bool>, kSlots> g_ready{};    // its path is fully written
std::array<std::array<char, kPathMax>, kSlots> g_paths{};
std::atomic<unsigned> g_counter{0};

int register_temp(const std::string& path) {
  if (path.size() >= kPathMax) return -1;
  for (int i = 0; i < kSlots; ++i) {
    bool expected = false;
    if (!g_claimed[i].compare_exchange_strong(expected, true)) continue;
    std::memcpy(g_paths[i].data(), path.c_str(), path.size() + 1);
    g_ready[i].store(true);
    return i;
  }
  return -1;  // table full: the file is still removed by the destructor
}

void unregister_temp(int slot) {
  if (slot < 0) return;
  g_ready[slot].store(false);
  g_claimed[slot].store(false);
}

extern "C" void on_interrupt(int sig) {
  for (int i = 0; i < kSlots; ++i)
    if (g_ready[i].load()) ::unlink(g_paths[i].data());
  ::_exit(128 + sig);
}

// Temporaries of this output left by an earlier process that was killed
// (SIGKILL, a power cut) are removed: those named for this output whose
// process no longer runs on this machine and that have not been written to
// for ten minutes (a folder shared over a network may hold a live one of
// another machine's process).
void remove_stale_temporaries(const std::filesystem::path& final_path) {
  namespace fs = std::filesystem;
  const fs::path folder = final_path.has_parent_path() ? final_path.parent_path() : fs::path(".");
  const std::string prefix = "." + final_path.stem().string() + ".tmp-";
  const std::string extension = final_path.extension().string();
  std::error_code ec;
  const auto now = fs::file_time_type::clock::now();
  for (fs::directory_iterator it(folder, ec), end; !ec && it != end; it.increment(ec)) {
    const std::string name = it->path().filename().string();
    if (name.size() <= prefix.size() + extension.size() || name.rfind(prefix, 0) != 0 ||
        name.compare(name.size() - extension.size(), extension.size(), extension) != 0)
      continue;
    // <pid>-<n> between the prefix and the extension, digits only.
    const std::string middle =
        name.substr(prefix.size(), name.size() - prefix.size() - extension.size());
    const std::size_t dash = middle.find('-');
    if (dash == 0 || dash == std::string::npos || dash > 9 ||
        middle.find_first_not_of("0123456789-") != std::string::npos ||
        middle.find('-', dash + 1) != std::string::npos || dash + 1 == middle.size())
      continue;
    const auto pid = static_cast<pid_t>(std::stol(middle.substr(0, dash)));
    if (pid == ::getpid() || ::kill(pid, 0) == 0 || errno != ESRCH) continue;
    std::error_code age_ec;
    const auto written = fs::last_write_time(it->path(), age_ec);
    if (age_ec || now - written < std::chrono::minutes(10)) continue;
    if (!it->is_regular_file(age_ec)) continue;
    fs::remove(it->path(), age_ec);
  }
}

}  // namespace

void check_output_path(const std::string& path, bool overwrite) {
  const char* component = "output";
  namespace fs = std::filesystem;
  if (path.empty()) throw InputError(component, "an empty output path was given");
  const fs::path p(path);
  const fs::path folder = p.has_parent_path() ? p.parent_path() : fs::path(".");
  std::error_code ec;
  if (!fs::is_directory(folder, ec))
    throw InputError(component, path + ": the folder " + folder.string() + " does not exist");
  if (fs::is_directory(p, ec))
    throw InputError(component, path + ": is a folder; give a file name for the output");
  if (fs::exists(p, ec) && !overwrite)
    throw InputError(component, path + ": exists already; add --overwrite to replace it");
}

PendingOutput::PendingOutput(std::string final_path, bool overwrite)
    : final_(std::move(final_path)) {
  check_output_path(final_, overwrite);
  namespace fs = std::filesystem;
  const fs::path p(final_);
  remove_stale_temporaries(p);
  const std::string name = "." + p.stem().string() + ".tmp-" + std::to_string(::getpid()) + "-" +
                           std::to_string(g_counter.fetch_add(1)) + p.extension().string();
  temp_ = (p.has_parent_path() ? p.parent_path() / name : fs::path(name)).string();
  slot_ = register_temp(temp_);
}

PendingOutput::PendingOutput(PendingOutput&& other) noexcept
    : final_(std::move(other.final_)),
      temp_(std::move(other.temp_)),
      slot_(other.slot_),
      committed_(other.committed_) {
  other.slot_ = -1;
  other.committed_ = true;  // the moved-from object owns nothing
}

PendingOutput::~PendingOutput() {
  if (!committed_) std::remove(temp_.c_str());
  unregister_temp(slot_);
}

void PendingOutput::commit() {
  std::error_code ec;
  std::filesystem::rename(temp_, final_, ec);
  if (ec)
    throw std::runtime_error("cannot rename " + temp_ + " to " + final_ + ": " + ec.message());
  committed_ = true;
  unregister_temp(slot_);
  slot_ = -1;
}

void write_text_output(const std::string& path, const std::string& text, bool overwrite) {
  PendingOutput out(path, overwrite);
  {
    std::ofstream f(out.temp_path(), std::ios::binary | std::ios::trunc);
    if (!f) throw std::runtime_error("cannot write " + out.temp_path());
    f << text;
    f.flush();
    if (!f) throw std::runtime_error("writing " + out.temp_path() + " failed");
  }
  out.commit();
}

void write_atomically(const std::string& path, bool overwrite,
                      const std::function<void(const std::string&)>& write) {
  PendingOutput out(path, overwrite);
  write(out.temp_path());
  out.commit();
}

void install_interrupt_cleanup() {
  struct sigaction sa {};
  sa.sa_handler = on_interrupt;
  sigemptyset(&sa.sa_mask);
  sigaction(SIGINT, &sa, nullptr);
  sigaction(SIGTERM, &sa, nullptr);
}

}  // namespace sillstone
