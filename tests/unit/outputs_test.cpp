// Outputs: temporary name, rename on commit, nothing left on failure.
#include <sys/stat.h>  // mkfifo
#include <sys/wait.h>
#include <unistd.h>
#include <catch2/catch.hpp>

#include <chrono>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "sillstone/error.hpp"
#include "sillstone/outputs.hpp"
#include "test_support.hpp"

using namespace sillstone;
namespace fs = std::filesystem;

namespace {
std::string read(const std::string& path) {
  std::ifstream f(path);
  std::stringstream s;
  s << f.rdbuf();
  return s.str();
}
}  // namespace

TEST_CASE("an output appears under its name only when committed", "[outputs]") {
  test::ScratchDir dir;
  const auto target = dir.path("model.json");
  {
    PendingOutput out(target, false);
    CHECK(fs::path(out.temp_path()).parent_path() == fs::path(target).parent_path());
    CHECK(fs::path(out.temp_path()).extension() == ".json");
    std::ofstream(out.temp_path()) << "{}";
    CHECK_FALSE(fs::exists(target));
    out.commit();
  }
  CHECK(read(target) == "{}");
  CHECK(std::distance(fs::directory_iterator(dir.path("")), fs::directory_iterator()) == 1);
}

TEST_CASE("an abandoned output leaves the previous file and no temporary", "[outputs]") {
  test::ScratchDir dir;
  const auto target = dir.write("map.csv", "old");
  {
    PendingOutput out(target, true);
    std::ofstream(out.temp_path()) << "half-writ";
    // no commit: e.g. an exception during writing
  }
  CHECK(read(target) == "old");
  CHECK(std::distance(fs::directory_iterator(dir.path("")), fs::directory_iterator()) == 1);
}

TEST_CASE("existing outputs need overwrite, missing folders are refused", "[outputs]") {
  test::ScratchDir dir;
  const auto target = dir.write("a.csv", "old");
  CHECK_THROWS_WITH(check_output_path(target, false),
                    Catch::Contains("exists already; add --overwrite"));
  CHECK_NOTHROW(check_output_path(target, true));
  CHECK_THROWS_WITH(check_output_path(dir.path("nope/a.csv"), false),
                    Catch::Contains("does not exist"));
  CHECK_THROWS_AS(check_output_path(dir.path(""), true), InputError);
  write_text_output(target, "new", true);
  CHECK(read(target) == "new");
}

TEST_CASE("temporaries left by a killed process are removed by the next writer of the output",
          "[outputs]") {
  test::ScratchDir dir;
  // A process id that no longer runs: a child that has exited and been reaped.
  const pid_t child = ::fork();
  if (child == 0) ::_exit(0);
  REQUIRE(child > 0);
  int status = 0;
  REQUIRE(::waitpid(child, &status, 0) == child);
  const std::string dead = std::to_string(child), live = std::to_string(::getppid());
  const auto old_time = fs::file_time_type::clock::now() - std::chrono::hours(1);

  const auto stale = dir.write(".out.tmp-" + dead + "-0.tif", "half");
  fs::last_write_time(stale, old_time);
  const auto recent = dir.write(".out.tmp-" + dead + "-1.tif", "being written elsewhere?");
  const auto running = dir.write(".out.tmp-" + live + "-0.tif", "a live process's");
  fs::last_write_time(running, old_time);
  const auto other_output = dir.write(".other.tmp-" + dead + "-0.tif", "another output's");
  fs::last_write_time(other_output, old_time);
  const auto not_ours = dir.write(".out.tmp-notes.tif", "not a temporary of ours");
  fs::last_write_time(not_ours, old_time);

  {
    PendingOutput out(dir.path("out.tif"), false);
    std::ofstream(out.temp_path()) << "new";
    out.commit();
  }
  CHECK_FALSE(fs::exists(stale));
  CHECK(fs::exists(recent));
  CHECK(fs::exists(running));
  CHECK(fs::exists(other_output));
  CHECK(fs::exists(not_ours));
  CHECK(read(dir.path("out.tif")) == "new");
}

// link(2) refuses a name that is taken (POSIX link(): EEXIST), where
// rename(2) would replace it; this is what makes the second writer lose.
TEST_CASE("a new output whose name was taken while it was written is refused, the file kept",
          "[outputs]") {
  test::ScratchDir dir;
  const auto target = dir.path("map.csv");
  PendingOutput out(target, false);
  std::ofstream(out.temp_path()) << "mine";
  dir.write("map.csv", "another program's");  // appears after the check, before the commit
  CHECK_THROWS_WITH(out.commit(), Catch::Contains("map.csv: exists already (another program"));
  CHECK(read(target) == "another program's");
}

TEST_CASE("outputs never replace links, FIFOs or folders, even with overwrite", "[outputs]") {
  test::ScratchDir dir;
  const auto real = dir.write("real.csv", "kept");
  const auto link = dir.path("link.csv");
  fs::create_symlink(real, link);
  const auto dangling = dir.path("dangling.csv");
  fs::create_symlink(dir.path("nowhere.csv"), dangling);
  const auto fifo = dir.path("pipe.csv");
  REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
  for (bool overwrite : {false, true}) {
    CHECK_THROWS_WITH(check_output_path(link, overwrite), Catch::Contains("is a symbolic link"));
    CHECK_THROWS_WITH(check_output_path(dangling, overwrite),
                      Catch::Contains("is a symbolic link"));
    CHECK_THROWS_WITH(check_output_path(fifo, overwrite), Catch::Contains("is a FIFO"));
    CHECK_THROWS_WITH(check_output_path(dir.path(""), overwrite), Catch::Contains("is a folder"));
  }
  // A link made while the output was written is not replaced either.
  const auto late = dir.write("late.csv", "old");
  PendingOutput out(late, true);
  std::ofstream(out.temp_path()) << "new";
  fs::remove(late);
  fs::create_symlink(real, late);
  CHECK_THROWS_AS(out.commit(), InputError);
  CHECK(fs::is_symlink(late));
  CHECK(read(real) == "kept");
  CHECK_FALSE(fs::exists(dangling));  // a dangling link stays dangling: nothing written through it
}

TEST_CASE("output extensions are checked without case", "[outputs]") {
  CHECK_NOTHROW(check_output_extension("a/OUT.CSV", {".csv"}, "-o", "the table"));
  CHECK_THROWS_WITH(check_output_extension("out.xlsx", {".csv"}, "-o", "the table"),
                    Catch::Contains("-o out.xlsx: '.xlsx' is not a format"));
  CHECK_THROWS_WITH(check_output_extension("out", {".csv", ".json"}, "-o", "the table"),
                    Catch::Contains("written as .csv or .json"));
}

TEST_CASE("a run folder is never the root of the file system, even with overwrite", "[outputs]") {
  // Nothing is written either way: "/" exists, so the checks alone decide.
  for (const char* root : {"/", "//", "/..", "/tmp/.."})
    CHECK_THROWS_WITH(RunFolder(root, {"model.json"}, true),
                      Catch::Contains("is the root of the file system"));
}

TEST_CASE("a run folder holding other files needs overwrite, and keeps those files", "[outputs]") {
  test::ScratchDir dir;
  const auto folder = dir.path("run");
  fs::create_directory(folder);
  dir.write("run/notes.txt", "the user's");
  dir.write("run/.model.tmp-1-0.json", "a temporary of ours");
  CHECK_THROWS_WITH(RunFolder(folder, {"model.json"}, false),
                    Catch::Contains("holds files this run does not write (notes.txt)"));
  {
    RunFolder run(folder, {"model.json"}, true);
    CHECK_FALSE(run.created());
  }  // not kept: a folder it did not create stays, with everything in it
  CHECK(read(dir.path("run/notes.txt")) == "the user's");
  fs::remove(dir.path("run/notes.txt"));
  CHECK_NOTHROW(RunFolder(folder, {"model.json"}, false));  // only its own temporaries: accepted
}

TEST_CASE("a run folder the run created goes again when the run fails, stays when kept",
          "[outputs]") {
  test::ScratchDir dir;
  const auto folder = dir.path("new-run/");
  {
    RunFolder run(folder, {"model.json"}, false);
    CHECK(run.created());
    CHECK(run.path() == dir.path("new-run"));
    CHECK(fs::is_directory(run.path()));
  }
  CHECK_FALSE(fs::exists(dir.path("new-run")));
  {
    RunFolder run(folder, {"model.json"}, false);
    run.keep();
  }
  CHECK(fs::is_directory(dir.path("new-run")));
}
