// Temporary-name-then-rename writing, and the interrupt clean-up.
//
// The signal handler may only use async-signal-safe calls, so pending
// temporary paths live in a fixed table of character buffers with an atomic
// "in use" flag per slot; the handler unlinks every slot in use and _exits.
#include <unistd.h>

#include <array>
#include <atomic>
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
  if (ec) throw std::runtime_error("cannot rename " + temp_ + " to " + final_ + ": " + ec.message());
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
