// The bad-input corpus (tests/data/bad, written by make_corpus.py): every broken or hostile
// input with its exact command, expected exit code and a fragment of the expected message,
// one test per row of cases.tsv. No run may change, add or remove a file of the corpus.

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include <sys/wait.h>

#include <gtest/gtest.h>

#include "stipple/io/output.hpp"
#include "support.hpp"

namespace stipple::test {
namespace {

struct BadCase {
  std::string name;
  int exit_code = 0;
  std::string fragment;
  std::string arguments;
};

std::string corpus_dir() {
  return std::string(STIPPLE_TEST_DATA_DIR) + "/bad";
}

std::vector<BadCase> load_cases() {
  std::vector<BadCase> cases;
  std::ifstream in(corpus_dir() + "/cases.tsv");
  std::string line;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#') continue;
    std::vector<std::string> cells;
    std::stringstream row(line);
    std::string cell;
    while (std::getline(row, cell, '\t')) cells.push_back(cell);
    if (cells.size() != 4) continue;
    cases.push_back({cells[0], std::stoi(cells[1]), cells[2], cells[3]});
  }
  return cases;
}

std::map<std::string, std::string> corpus_checksums() {
  std::map<std::string, std::string> sums;
  for (const auto& entry : std::filesystem::directory_iterator(corpus_dir()))
    sums[entry.path().filename().string()] = sha256_file(entry.path().string());
  return sums;
}

std::string replace_all(std::string text, const std::string& from, const std::string& to) {
  for (auto at = text.find(from); at != std::string::npos; at = text.find(from, at + to.size()))
    text.replace(at, from.size(), to);
  return text;
}

class BadInput : public testing::TestWithParam<BadCase> {};

TEST_P(BadInput, IsRefusedOrWarnedAndLeavesEveryInputUnchanged) {
  const BadCase& c = GetParam();
  const auto before = corpus_checksums();
  TempDir tmp;
  const std::string arguments =
      replace_all(replace_all(c.arguments, "{bad}", corpus_dir()), "{tmp}", tmp.path().string());
  const std::string err_file = tmp.file("stderr.txt");
  const std::string command = std::string(STIPPLE_CLI) + " " + arguments + " 2>" + err_file + " </dev/null";
  FILE* pipe = popen(command.c_str(), "r");
  ASSERT_NE(pipe, nullptr);
  std::string out;
  char buffer[4096];
  std::size_t n = 0;
  while ((n = fread(buffer, 1, sizeof buffer, pipe)) > 0) out.append(buffer, n);
  const int status = pclose(pipe);
  std::ifstream err_stream(err_file);
  std::stringstream err_text;
  err_text << err_stream.rdbuf();
  const std::string err = err_text.str();
  const int exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;

  EXPECT_EQ(exit_code, c.exit_code) << command << "\n" << err;
  EXPECT_NE((out + err).find(c.fragment), std::string::npos) << "expected: " << c.fragment << "\nstderr: " << err;
  if (c.exit_code == 2) {
    // A refusal is one line: "error: ..." naming what was wrong.
    EXPECT_EQ(err.rfind("error: ", 0), 0u) << err;
    EXPECT_EQ(std::count(err.begin(), err.end(), '\n'), 1) << err;
  }
  EXPECT_EQ(corpus_checksums(), before) << "a file of the corpus changed, appeared or vanished";
}

std::string case_name(const testing::TestParamInfo<BadCase>& info) {
  std::string name = info.param.name;
  for (char& ch : name)
    if (!std::isalnum(static_cast<unsigned char>(ch))) ch = '_';
  return name;
}

INSTANTIATE_TEST_SUITE_P(Corpus, BadInput, testing::ValuesIn(load_cases()), case_name);

TEST(BadInputCorpus, HoldsAtLeastSixtyCases) {
  EXPECT_GE(load_cases().size(), 60u);
}

}  // namespace
}  // namespace stipple::test
