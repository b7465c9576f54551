// The report page (cli/report_page.hpp). The script and style sheet are
// cli/report/report.js and report.css, embedded at build time.
#include "cli/report_page.hpp"

#include "cli/figures/figure.hpp"  // escape_xml

#include <sstream>

namespace pleat::cli {

std::string report_script();  // generated: report_assets.cpp
std::string report_style();

namespace {

// JSON inside <script>: "</" would end the element early, and U+2028/2029
// are kept as escapes; everything else is the JSON text as it is.
std::string script_safe_json(const Json& data) {
  const std::string text = data.dump(-1, ' ', true);  // ASCII only: non-ASCII as \u escapes
  std::string out;
  out.reserve(text.size() + 16);
  for (std::size_t i = 0; i < text.size(); ++i) {
    if (text[i] == '<' && i + 1 < text.size() && text[i + 1] == '/') {
      out += "<\\/";
      ++i;
    } else {
      out += text[i];
    }
  }
  return out;
}

}  // namespace

std::string report_html(const std::string& title, const std::vector<SummaryRow>& summary, const Json& data) {
  std::ostringstream out;
  out << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
         "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
         // Nothing may be fetched: the page is one file, opened from disk.
         "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; "
         "script-src 'unsafe-inline'; img-src data:\">\n"
         "<link rel=\"icon\" href=\"data:,\">\n"
         "<meta name=\"generator\" content=\"pleat report\">\n"
      << "<title>" << escape_xml(title) << "</title>\n<style>\n" << report_style() << "</style>\n</head>\n<body>\n"
      << "<header><h1>" << escape_xml(title) << "</h1></header>\n<main>\n"
      << "<section id=\"summary\" aria-labelledby=\"summary-heading\">\n"
         "<h2 id=\"summary-heading\">Summary</h2>\n<dl class=\"summary\">\n";
  for (const SummaryRow& row : summary)
    out << "<dt>" << escape_xml(row.label) << "</dt><dd>" << escape_xml(row.text) << "</dd>\n";
  out << "</dl>\n</section>\n"
         "<section id=\"explore\" aria-label=\"explore\">\n"
         "<noscript><p class=\"note\">The map, graph or histogram is drawn by the page's own script; with "
         "scripts off the summary above still holds every count.</p></noscript>\n"
         "</section>\n</main>\n"
      << "<script type=\"application/json\" id=\"pleat-data\">" << script_safe_json(data) << "</script>\n"
      << "<script>\n" << report_script() << "</script>\n</body>\n</html>\n";
  return out.str();
}

}  // namespace pleat::cli
