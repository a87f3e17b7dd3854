// Temporary-name-then-publish writing, and the interrupt clean-up.
//
// The signal handler may only use async-signal-safe calls, so pending
// temporary paths (and run folders being filled) live in fixed tables of
// character buffers with an atomic "in use" flag per slot; the handler
// unlinks every temporary in use, removes the empty folders and _exits.
#include <fcntl.h>  // AT_FDCWD
#include <signal.h>
#include <stdio.h>  // renameat2, RENAME_NOREPLACE (glibc 2.28)
#include <unistd.h>

#include <algorithm>
#include <array>
#include <atomic>
#include <cerrno>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <stdexcept>

#include "core/file_kind.hpp"
#include "core/interrupt_registry.hpp"
#include "sillstone/error.hpp"
#include "sillstone/outputs.hpp"

namespace sillstone {
namespace {

constexpr int kSlots = 64;
constexpr int kFolderSlots = 8;
constexpr std::size_t kPathMax = 4096;

// A fixed table of paths the signal handler may read: a slot is claimed,
// its path written, then marked ready; the handler reads ready slots only.
template <int N>
struct PathTable {
  std::array<std::atomic<bool>, N> claimed{};  // slot taken by an owner
  std::array<std::atomic<bool>, N> ready{};    // its path is fully written
  std::array<std::array<char, kPathMax>, N> paths{};

  int add(const std::string& path) {
    if (path.size() >= kPathMax) return -1;
    for (int i = 0; i < N; ++i) {
      bool expected = false;
      if (!claimed[i].compare_exchange_strong(expected, true)) continue;
      std::memcpy(paths[i].data(), path.c_str(), path.size() + 1);
      ready[i].store(true);
      return i;
    }
    return -1;  // table full: the owner still removes the path itself
  }
  void remove(int slot) {
    if (slot < 0) return;
    ready[slot].store(false);
    claimed[slot].store(false);
  }
};

PathTable<kSlots> g_temporaries;
PathTable<kFolderSlots> g_folders;
std::atomic<unsigned> g_counter{0};

extern "C" void on_interrupt(int sig) {
  for (int i = 0; i < kSlots; ++i)
    if (g_temporaries.ready[i].load()) ::unlink(g_temporaries.paths[i].data());
  // Folders last, once the temporaries in them are gone; rmdir leaves a
  // folder that still holds anything.
  for (int i = 0; i < kFolderSlots; ++i)
    if (g_folders.ready[i].load()) ::rmdir(g_folders.paths[i].data());
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

// Publishes `temp` under `final_path` only if that name is free: link(2)
// fails with EEXIST when it is taken, atomically, where rename(2) would
// replace it. File systems without hard links (FAT, some network and FUSE
// file systems) get an exclusive rename (renameat2 RENAME_NOREPLACE) instead.
void publish_new(const std::string& temp, const std::string& final_path) {
  int err = 0;
  if (::link(temp.c_str(), final_path.c_str()) == 0) {
    ::unlink(temp.c_str());  // the file lives on under its final name
    return;
  }
  err = errno;
  if (err == EPERM || err == ENOTSUP || err == EOPNOTSUPP || err == ENOSYS || err == EMLINK) {
    if (::renameat2(AT_FDCWD, temp.c_str(), AT_FDCWD, final_path.c_str(), RENAME_NOREPLACE) == 0)
      return;
    err = errno;
  }
  if (err == EEXIST)
    throw InputError("output", final_path +
                                   ": exists already (another program wrote it while this one "
                                   "ran; it is left as it was); add --overwrite to replace it");
  throw std::runtime_error("cannot publish " + temp + " as " + final_path + ": " +
                           std::strerror(err));
}

}  // namespace

namespace detail {

int register_temporary(const std::string& path) { return g_temporaries.add(path); }
void unregister_temporary(int slot) { g_temporaries.remove(slot); }
int register_folder(const std::string& path) { return g_folders.add(path); }
void unregister_folder(int slot) { g_folders.remove(slot); }
}  // namespace detail

void check_output_path(const std::string& path, bool overwrite) {
  const char* component = "output";
  namespace fs = std::filesystem;
  if (path.empty()) throw InputError(component, "an empty output path was given");
  const fs::path p(path);
  const fs::path folder = p.has_parent_path() ? p.parent_path() : fs::path(".");
  std::error_code ec;
  if (!fs::is_directory(folder, ec))
    throw InputError(component, path + ": the folder " + folder.string() + " does not exist");
  // lstat, not stat: a link is judged as a link, never by what it points to.
  const fs::file_status status = fs::symlink_status(p, ec);
  if (!fs::exists(status)) return;
  if (fs::is_symlink(status))
    throw InputError(component, path +
                                    ": is a symbolic link; outputs never replace a link nor "
                                    "write through one (give the path of the file itself)");
  if (fs::is_directory(status))
    throw InputError(component, path + ": is a folder; give a file name for the output");
  if (!fs::is_regular_file(status))
    throw InputError(component, path + ": is " + detail::file_kind(status) +
                                    ", not a regular file; outputs replace regular files only");
  if (!overwrite)
    throw InputError(component, path + ": exists already; add --overwrite to replace it");
}

void check_output_extension(const std::string& path, const std::vector<std::string>& extensions,
                            const std::string& option, const std::string& what) {
  std::string ext = std::filesystem::path(path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  if (std::find(extensions.begin(), extensions.end(), ext) != extensions.end()) return;
  std::string list;
  for (std::size_t i = 0; i < extensions.size(); ++i)
    list += (i == 0 ? "" : i + 1 == extensions.size() ? " or " : ", ") + extensions[i];
  throw InputError("output", option + " " + path + ": " +
                                 (ext.empty() ? "a name without extension" : "'" + ext + "'") +
                                 " is not a format sillstone writes; " + what + " is written as " +
                                 list);
}

PendingOutput::PendingOutput(std::string final_path, bool overwrite)
    : final_(std::move(final_path)), overwrite_(overwrite) {
  check_output_path(final_, overwrite);
  namespace fs = std::filesystem;
  const fs::path p(final_);
  remove_stale_temporaries(p);
  const std::string name = "." + p.stem().string() + ".tmp-" + std::to_string(::getpid()) + "-" +
                           std::to_string(g_counter.fetch_add(1)) + p.extension().string();
  temp_ = (p.has_parent_path() ? p.parent_path() / name : fs::path(name)).string();
  slot_ = detail::register_temporary(temp_);
}

PendingOutput::PendingOutput(PendingOutput&& other) noexcept
    : final_(std::move(other.final_)),
      temp_(std::move(other.temp_)),
      slot_(other.slot_),
      overwrite_(other.overwrite_),
      committed_(other.committed_) {
  other.slot_ = -1;
  other.committed_ = true;  // the moved-from object owns nothing
}

PendingOutput::~PendingOutput() {
  if (!committed_) std::remove(temp_.c_str());
  detail::unregister_temporary(slot_);
}

void PendingOutput::commit() {
  if (overwrite_) {
    // The name may have become a link, a FIFO or a folder while we wrote.
    check_output_path(final_, true);
    std::error_code ec;
    std::filesystem::rename(temp_, final_, ec);
    if (ec)
      throw std::runtime_error("cannot rename " + temp_ + " to " + final_ + ": " + ec.message());
  } else {
    publish_new(temp_, final_);
  }
  committed_ = true;
  detail::unregister_temporary(slot_);
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
