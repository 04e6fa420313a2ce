// The sample's LaTeX tables compile inside a journal-like two-column page
// and fit: the one-column table in a column of 8.4 cm (as the narrowest of
// the usual astronomy journals set it; common practice, recalled from
// memory), the wide one across a 17.4 cm text block, with no overfull box
// wider than 1 pt (TeX's own measurement, read from its log). Needs
// pdflatex (Debian texlive-latex-base); without it the test says so and
// checks nothing else.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <regex>

#include "../support/test_support.hpp"
#include "pipeline_fixtures.hpp"

namespace fs = std::filesystem;
using namespace fulcrum;

TEST_CASE("the LaTeX tables compile in a two-column journal page without overfull boxes", "[pipeline][latex]") {
  if (test::run_shell("command -v pdflatex").exit_code != 0) {
    WARN("not run: pdflatex is not installed (Debian package texlive-latex-base)");
    return;
  }
  auto dir = test::temp_dir("journal-table");
  const std::string manifest = test::write_tiny_sample(dir, 4);
  auto r = test::run_fulcrum("run " + manifest + " --out " + (dir / "out").string());
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  for (const char* table : {"robustness.tex", "robustness-wide.tex"}) {
    {
      std::ofstream tex(dir / "page.tex");
      tex << "\\documentclass[twocolumn,10pt]{article}\n"
             "\\usepackage[a4paper,textwidth=17.4cm,columnsep=0.6cm]{geometry}\n"
             "\\begin{document}\n\\input{" << (dir / "out" / table).string() << "}\nSome text.\n\\end{document}\n";
    }
    auto c = test::run_shell("cd " + dir.string() + " && pdflatex -interaction=nonstopmode -halt-on-error page.tex");
    INFO(table << "\n" << c.out);
    REQUIRE(c.exit_code == 0);
    const std::string log = test::slurp(dir / "page.log");
    const std::regex overfull(R"(Overfull \\hbox \(([0-9.]+)pt too wide)");
    double worst = 0.0;
    for (auto it = std::sregex_iterator(log.begin(), log.end(), overfull); it != std::sregex_iterator(); ++it)
      worst = std::max(worst, std::stod((*it)[1].str()));
    CHECK(worst <= 1.0);
  }
}
