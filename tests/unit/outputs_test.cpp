// Outputs: temporary name, rename on commit, nothing left on failure.
#include <catch2/catch.hpp>

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
