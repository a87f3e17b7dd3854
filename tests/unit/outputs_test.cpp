// Outputs: temporary name, rename on commit, nothing left on failure.
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
