// SVG figures of the briefing, written by hand: every mark is placed from its
// data by the formulas in this file, so the tests can check positions and
// lengths against the numbers they show.
#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <map>
#include <numeric>
#include <sstream>

#include "cullcast/report/briefing.hpp"

namespace cullcast::report {
namespace {

constexpr double kPi = 3.14159265358979323846;
// Length of one degree of latitude on a sphere of radius 6371 km (the mean
// Earth radius also used by the drift stage's "sphere" model), km.
constexpr double kKmPerDegree = 2 * kPi * 6371.0 / 360.0;

std::string num(double v, int digits = 1) {
  char b[64];
  std::snprintf(b, sizeof b, "%.*f", digits, v);
  return b;
}

std::string sig(double v, int digits = 3) {
  char b[64];
  std::snprintf(b, sizeof b, "%.*g", digits, v);
  return b;
}

// Linear interpolation between colour stops, t in [0, 1].
std::string ramp(const std::vector<std::array<int, 3>>& stops, double t) {
  t = std::clamp(std::isfinite(t) ? t : 0.0, 0.0, 1.0);
  const double s = t * static_cast<double>(stops.size() - 1);
  const std::size_t k = std::min(stops.size() - 2, static_cast<std::size_t>(s));
  const double f = s - static_cast<double>(k);
  char b[16];
  int c[3];
  for (int i = 0; i < 3; ++i) c[i] = static_cast<int>(std::lround(stops[k][i] + f * (stops[k + 1][i] - stops[k][i])));
  std::snprintf(b, sizeof b, "#%02x%02x%02x", c[0], c[1], c[2]);
  return b;
}

// Sequential palette of our own: pale sand -> amber -> brick -> deep plum;
// lightness falls monotonically, so it reads in grey and with colour-vision deficiency.
const std::vector<std::array<int, 3>> kHeat = {{250, 246, 222}, {241, 196, 92}, {214, 110, 52}, {148, 42, 62}, {58, 18, 62}};

// A "nice" step (1, 2, 2.5 or 5 times a power of ten) giving about `target` intervals.
double nice_step(double span, double target) {
  const double raw = span / target;
  const double p = std::pow(10.0, std::floor(std::log10(raw)));
  for (double m : {1.0, 2.0, 2.5, 5.0, 10.0}) {
    if (m * p >= raw) return m * p;
  }
  return 10 * p;
}

std::string lon_label(double lon, int digits) {
  return num(std::fabs(lon), digits) + "\xC2\xB0" + (lon < 0 ? "W" : "E");
}
std::string lat_label(double lat, int digits) {
  return num(std::fabs(lat), digits) + "\xC2\xB0" + (lat < 0 ? "S" : "N");
}

int decimals_for(double step) { return std::max(0, static_cast<int>(std::ceil(-std::log10(step) - 1e-9))); }

std::string polygon_path(const MapFrame& f, const reefs::Reef& r) {
  std::ostringstream p;
  for (const auto& part : r.parts) {
    auto ring = [&](const reefs::Ring& ring) {
      for (std::size_t k = 0; k < ring.size(); ++k) {
        p << (k ? "L" : "M") << num(f.x(ring[k].lon), 2) << "," << num(f.y(ring[k].lat), 2);
      }
      p << "Z";
    };
    ring(part.outer);
    for (const auto& h : part.holes) ring(h);
  }
  return p.str();
}

bool is_priority(const BriefingData& d, int i) {
  return d.reefs[i].priority > d.priority_threshold && d.reefs[i].priority > 0;
}

// Land cells, coastline, water background, graticule ticks, frame.
void base_map(std::ostringstream& s, const BriefingData& d, const MapFrame& f) {
  s << "<rect class='water' x='" << num(f.left, 2) << "' y='" << num(f.top, 2) << "' width='" << num(f.width, 2)
    << "' height='" << num(f.height, 2) << "' fill='#e8f1f6'/>\n";
  const LandGrid& g = d.land;
  if (!g.empty()) {
    auto land = [&](long i, long j) {
      if (i < 0 || j < 0 || i >= static_cast<long>(g.nx) || j >= static_cast<long>(g.ny)) return false;
      return g.land[static_cast<std::size_t>(j) * g.nx + static_cast<std::size_t>(i)] != 0;
    };
    std::ostringstream cells, coast;
    for (std::size_t j = 0; j < g.ny; ++j) {
      const double y0 = f.y(g.lat0 + (static_cast<double>(j) + 0.5) * g.dlat);
      const double y1 = f.y(g.lat0 + (static_cast<double>(j) - 0.5) * g.dlat);
      for (std::size_t i = 0; i < g.nx;) {
        if (!land(static_cast<long>(i), static_cast<long>(j))) {
          ++i;
          continue;
        }
        std::size_t e = i;
        while (e < g.nx && land(static_cast<long>(e), static_cast<long>(j))) ++e;
        const double x0 = f.x(g.lon0 + (static_cast<double>(i) - 0.5) * g.dlon);
        const double x1 = f.x(g.lon0 + (static_cast<double>(e) - 0.5) * g.dlon);
        cells << "M" << num(x0, 2) << "," << num(std::min(y0, y1), 2) << "H" << num(x1, 2) << "V"
              << num(std::max(y0, y1), 2) << "H" << num(x0, 2) << "Z";
        i = e;
      }
      // Coastline: cell edges between a land node and a water node.
      for (std::size_t i = 0; i < g.nx; ++i) {
        const long li = static_cast<long>(i), lj = static_cast<long>(j);
        if (!land(li, lj)) continue;
        const double xa = f.x(g.lon0 + (static_cast<double>(i) - 0.5) * g.dlon);
        const double xb = f.x(g.lon0 + (static_cast<double>(i) + 0.5) * g.dlon);
        const double yn = f.y(g.lat0 + (static_cast<double>(j) + 0.5) * g.dlat);
        const double ys = f.y(g.lat0 + (static_cast<double>(j) - 0.5) * g.dlat);
        if (!land(li - 1, lj) && i > 0) coast << "M" << num(xa, 2) << "," << num(yn, 2) << "V" << num(ys, 2);
        if (!land(li + 1, lj) && i + 1 < g.nx) coast << "M" << num(xb, 2) << "," << num(yn, 2) << "V" << num(ys, 2);
        if (!land(li, lj + 1) && j + 1 < g.ny) coast << "M" << num(xa, 2) << "," << num(yn, 2) << "H" << num(xb, 2);
        if (!land(li, lj - 1) && j > 0) coast << "M" << num(xa, 2) << "," << num(ys, 2) << "H" << num(xb, 2);
      }
    }
    s << "<path class='land' d='" << cells.str() << "' fill='#d8cfbd'/>\n";
    s << "<path class='coast' d='" << coast.str() << "' fill='none' stroke='#6d5f48' stroke-width='1'/>\n";
  }
  // Ticks and graticule.
  const double lon_step = nice_step(f.lon_max - f.lon_min, 5), lat_step = nice_step(f.lat_max - f.lat_min, 4);
  s << "<g class='ticks' font-size='11' fill='#333'>\n";
  for (double lon = std::ceil(f.lon_min / lon_step) * lon_step; lon <= f.lon_max + 1e-9; lon += lon_step) {
    const double x = f.x(lon);
    s << "<line x1='" << num(x, 2) << "' y1='" << num(f.top, 2) << "' x2='" << num(x, 2) << "' y2='"
      << num(f.top + f.height, 2) << "' stroke='#9bb3c2' stroke-width='0.5' stroke-dasharray='3 4'/>";
    s << "<line x1='" << num(x, 2) << "' y1='" << num(f.top + f.height, 2) << "' x2='" << num(x, 2) << "' y2='"
      << num(f.top + f.height + 5, 2) << "' stroke='#333'/>";
    s << "<text x='" << num(x, 2) << "' y='" << num(f.top + f.height + 17, 2) << "' text-anchor='middle'>"
      << lon_label(lon, decimals_for(lon_step)) << "</text>\n";
  }
  for (double lat = std::ceil(f.lat_min / lat_step) * lat_step; lat <= f.lat_max + 1e-9; lat += lat_step) {
    const double y = f.y(lat);
    s << "<line x1='" << num(f.left, 2) << "' y1='" << num(y, 2) << "' x2='" << num(f.left + f.width, 2)
      << "' y2='" << num(y, 2) << "' stroke='#9bb3c2' stroke-width='0.5' stroke-dasharray='3 4'/>";
    s << "<line x1='" << num(f.left - 5, 2) << "' y1='" << num(y, 2) << "' x2='" << num(f.left, 2) << "' y2='"
      << num(y, 2) << "' stroke='#333'/>";
    s << "<text x='" << num(f.left - 8, 2) << "' y='" << num(y + 4, 2) << "' text-anchor='end'>"
      << lat_label(lat, decimals_for(lat_step)) << "</text>\n";
  }
  s << "</g>\n<rect x='" << num(f.left, 2) << "' y='" << num(f.top, 2) << "' width='" << num(f.width, 2)
    << "' height='" << num(f.height, 2) << "' fill='none' stroke='#333' stroke-width='1'/>\n";
}

// Scale bar (bottom left) and north arrow (top right).
void scale_and_north(std::ostringstream& s, const MapFrame& f) {
  const double lat_mid = 0.5 * (f.lat_min + f.lat_max);
  const double km_per_px = (f.lon_max - f.lon_min) / f.width * kKmPerDegree * std::cos(lat_mid * kPi / 180);
  const double km = nice_step(f.width * km_per_px / 5, 1);
  const double px = km / km_per_px;
  const double x = f.left + 16, y = f.top + f.height - 20;
  s << "<g class='scale-bar' data-km='" << sig(km, 6) << "' data-px='" << num(px, 3) << "'>";
  s << "<rect x='" << num(x - 6, 2) << "' y='" << num(y - 18, 2) << "' width='" << num(px + 40, 2)
    << "' height='30' fill='#ffffff' fill-opacity='0.8'/>";
  s << "<rect x='" << num(x, 2) << "' y='" << num(y, 2) << "' width='" << num(px / 2, 2) << "' height='5' fill='#222'/>";
  s << "<rect x='" << num(x + px / 2, 2) << "' y='" << num(y, 2) << "' width='" << num(px / 2, 2)
    << "' height='5' fill='#fff' stroke='#222' stroke-width='0.8'/>";
  s << "<text x='" << num(x, 2) << "' y='" << num(y - 4, 2) << "' font-size='10' text-anchor='middle'>0</text>";
  s << "<text x='" << num(x + px, 2) << "' y='" << num(y - 4, 2) << "' font-size='10' text-anchor='middle'>"
    << sig(km, 3) << " km</text></g>\n";
  const double nx = f.left + f.width - 26, ny = f.top + 14;
  s << "<g class='north-arrow'><rect x='" << num(nx - 14, 2) << "' y='" << num(ny - 4, 2)
    << "' width='28' height='44' fill='#fff' fill-opacity='0.8'/>"
    << "<path d='M" << num(nx, 2) << "," << num(ny + 2, 2) << "L" << num(nx + 8, 2) << "," << num(ny + 26, 2) << "L"
    << num(nx, 2) << "," << num(ny + 20, 2) << "L" << num(nx - 8, 2) << "," << num(ny + 26, 2)
    << "Z' fill='#222'/><text x='" << num(nx, 2) << "' y='" << num(ny + 38, 2)
    << "' font-size='11' font-weight='bold' text-anchor='middle'>N</text></g>\n";
}

std::string svg_open(double w, double h, const std::string& label) {
  std::ostringstream s;
  s << "<svg xmlns='http://www.w3.org/2000/svg' viewBox='0 0 " << num(w, 0) << " " << num(h, 0) << "' width='"
    << num(w, 0) << "' height='" << num(h, 0) << "' role='img' aria-label='" << html_escape(label)
    << "' font-family='DejaVu Sans, Helvetica, Arial, sans-serif'>\n";
  return s.str();
}

constexpr double kMapLeft = 78, kMapTop = 12, kMapWidth = 820;

}  // namespace

std::string html_escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += c;
    }
  }
  return out;
}

MapFrame MapFrame::fit(double lon_min, double lon_max, double lat_min, double lat_max, double left, double top,
                       double width) {
  MapFrame f;
  f.lon_min = lon_min;
  f.lon_max = lon_max;
  f.lat_min = lat_min;
  f.lat_max = lat_max;
  f.left = left;
  f.top = top;
  f.width = width;
  const double c = std::cos(0.5 * (lat_min + lat_max) * kPi / 180);
  f.height = width * (lat_max - lat_min) / ((lon_max - lon_min) * c);
  return f;
}

MapFrame map_frame(const BriefingData& d, double left, double top, double width) {
  double lo0 = INFINITY, lo1 = -INFINITY, la0 = INFINITY, la1 = -INFINITY;
  auto add = [&](double lon, double lat) {
    lo0 = std::min(lo0, lon);
    lo1 = std::max(lo1, lon);
    la0 = std::min(la0, lat);
    la1 = std::max(la1, lat);
  };
  for (const auto& r : d.reefs) {
    add(r.lon_min, r.lat_min);
    add(r.lon_max, r.lat_max);
  }
  for (const auto& a : d.aggregations) add(a.lon, a.lat);
  if (!std::isfinite(lo0) && !d.land.empty()) {  // no reefs: the currents grid
    add(d.land.lon0, d.land.lat0);
    add(d.land.lon0 + d.land.dlon * static_cast<double>(d.land.nx - 1),
        d.land.lat0 + d.land.dlat * static_cast<double>(d.land.ny - 1));
  }
  if (!std::isfinite(lo0)) {
    lo0 = 0;
    lo1 = 1;
    la0 = 0;
    la1 = 1;
  }
  const double m = 0.12 * std::max({lo1 - lo0, la1 - la0, 0.02});
  MapFrame f = MapFrame::fit(lo0 - m, lo1 + m, la0 - m, la1 + m, left, top, width);
  if (f.height > 1.1 * width) f = MapFrame::fit(lo0 - m, lo1 + m, la0 - m, la1 + m, left, top, width * 1.1 * width / f.height);
  return f;
}

std::string role_colour(const std::string& role) {
  // Our palette: differs in lightness as well as hue (rust dark-mid, ochre
  // light, steel blue mid, grey), so the roles stay apart for deuteranopes,
  // protanopes and tritanopes and in greyscale print.
  if (role == "source") return "#b2461d";
  if (role == "sink") return "#2f6fae";
  if (role == "exchange") return "#e6b83a";
  return "#a3a3a3";
}

std::vector<int> position_order(const std::vector<reefs::Reef>& reefs) {
  std::vector<int> o(reefs.size());
  std::iota(o.begin(), o.end(), 0);
  double lo0 = INFINITY, lo1 = -INFINITY, la0 = INFINITY, la1 = -INFINITY;
  for (const auto& r : reefs) {
    lo0 = std::min(lo0, r.centroid.lon);
    lo1 = std::max(lo1, r.centroid.lon);
    la0 = std::min(la0, r.centroid.lat);
    la1 = std::max(la1, r.centroid.lat);
  }
  const bool east_west = (lo1 - lo0) * std::cos(0.5 * (la0 + la1) * kPi / 180) >= (la1 - la0);
  std::stable_sort(o.begin(), o.end(), [&](int a, int b) {
    const auto& p = reefs[a].centroid;
    const auto& q = reefs[b].centroid;
    return east_west ? std::pair(p.lon, p.lat) < std::pair(q.lon, q.lat) : std::pair(p.lat, p.lon) < std::pair(q.lat, q.lon);
  });
  return o;
}

std::string svg_role_map(const BriefingData& d) {
  const MapFrame f = map_frame(d, kMapLeft, kMapTop, kMapWidth);
  const double w = f.left + f.width + 12, h = f.top + f.height + 30;
  std::ostringstream s;
  s << svg_open(w, h, "Map of reefs by role, strongest links and recommended cull sites");
  s << "<defs><marker id='arrow' viewBox='0 0 10 10' refX='8' refY='5' markerWidth='11' markerHeight='11' markerUnits='userSpaceOnUse' "
       "orient='auto-start-reverse'><path d='M0,0L10,5L0,10z' fill='#1d2a33'/></marker></defs>\n";
  base_map(s, d, f);
  // Links: the strongest first-order links (mean over events), width ~ probability.
  std::vector<Link> links;
  for (const auto& l : d.links) {
    if (l.from != l.to && l.mean > 0) links.push_back(l);
  }
  std::stable_sort(links.begin(), links.end(), [](const Link& a, const Link& b) { return a.mean > b.mean; });
  if (links.size() > static_cast<std::size_t>(std::max(0, d.max_links))) links.resize(std::max(0, d.max_links));
  const double pmax = links.empty() ? 1.0 : links.front().mean;
  s << "<g class='links' fill='none' stroke='#1d2a33' stroke-opacity='0.62'>\n";
  for (auto it = links.rbegin(); it != links.rend(); ++it) {
    const auto& a = d.reefs[it->from].centroid;
    const auto& b = d.reefs[it->to].centroid;
    const double x0 = f.x(a.lon), y0 = f.y(a.lat), x1 = f.x(b.lon), y1 = f.y(b.lat);
    const double len = std::hypot(x1 - x0, y1 - y0);
    if (len < 1) continue;
    const double ux = (x1 - x0) / len, uy = (y1 - y0) / len;
    const double sx = x0 + 6 * ux, sy = y0 + 6 * uy, ex = x1 - 8 * ux, ey = y1 - 8 * uy;
    // Bend to the right of the direction of travel so A->B and B->A stay apart.
    const double cx = 0.5 * (sx + ex) - 0.15 * len * uy, cy = 0.5 * (sy + ey) + 0.15 * len * ux;
    const double width = 0.8 + 7.2 * it->mean / pmax;
    s << "<path class='link' data-from='" << html_escape(d.reefs[it->from].id) << "' data-to='"
      << html_escape(d.reefs[it->to].id) << "' data-p='" << sig(it->mean, 6) << "' stroke-width='" << num(width, 2)
      << "' marker-end='url(#arrow)' d='M" << num(sx, 2) << "," << num(sy, 2) << "Q" << num(cx, 2) << ","
      << num(cy, 2) << " " << num(ex, 2) << "," << num(ey, 2) << "'><title>"
      << html_escape(d.reefs[it->from].name) << " \u2192 " << html_escape(d.reefs[it->to].name)
      << ": P = " << sig(it->mean) << " (sd " << sig(it->sd) << " across events)</title></path>\n";
  }
  s << "</g>\n<g class='reefs'>\n";
  for (std::size_t i = 0; i < d.reefs.size(); ++i) {
    const auto& r = d.reefs[i];
    const std::string role = i < d.results.size() ? d.results[i].role : "isolated";
    const bool pri = is_priority(d, static_cast<int>(i));
    s << "<path class='reef' data-reef='" << html_escape(r.id) << "' data-role='" << html_escape(role) << "' d='"
      << polygon_path(f, r) << "' fill='" << role_colour(role) << "' stroke='" << (pri ? "#000" : "#3b3b3b")
      << "' stroke-width='" << (pri ? "2.4" : "0.7") << "'><title>" << html_escape(r.name) << " ("
      << html_escape(r.id) << "): " << html_escape(role) << (pri ? ", priority reef" : "") << "</title></path>\n";
    s << "<circle class='reef-centroid' data-reef='" << html_escape(r.id) << "' cx='" << num(f.x(r.centroid.lon), 2)
      << "' cy='" << num(f.y(r.centroid.lat), 2) << "' r='1.6' fill='#111'/>\n";
  }
  s << "</g>\n<g class='priority-marks'>\n";
  for (std::size_t i = 0; i < d.reefs.size(); ++i) {
    if (!is_priority(d, static_cast<int>(i))) continue;
    const double x = f.x(d.reefs[i].centroid.lon) - 11, y = f.y(d.reefs[i].centroid.lat) - 11;
    std::ostringstream star;
    for (int k = 0; k < 10; ++k) {
      const double rr = k % 2 ? 2.6 : 6.5, a = -kPi / 2 + k * kPi / 5;
      star << (k ? "L" : "M") << num(x + rr * std::cos(a), 2) << "," << num(y + rr * std::sin(a), 2);
    }
    s << "<path class='priority' data-reef='" << html_escape(d.reefs[i].id) << "' d='" << star.str()
      << "Z' fill='#ffffff' stroke='#000' stroke-width='1.2'/>\n";
  }
  s << "</g>\n<g class='aggregations'>\n";
  for (const auto& a : d.aggregations) {
    const double x = f.x(a.lon), y = f.y(a.lat);
    s << "<path class='aggregation' d='M" << num(x, 2) << "," << num(y - 4.5, 2) << "L" << num(x + 4.5, 2) << ","
      << num(y, 2) << "L" << num(x, 2) << "," << num(y + 4.5, 2) << "L" << num(x - 4.5, 2) << "," << num(y, 2)
      << "Z' fill='#5b2a86' stroke='#fff' stroke-width='0.8'><title>" << html_escape(a.id) << ": "
      << sig(a.adults) << " adults seen</title></path>\n";
  }
  s << "</g>\n<g class='cull-sites' font-size='11' font-weight='bold'>\n";
  for (const auto& c : d.ranking) {
    if (c.reef < 0) continue;
    const double x0 = f.x(d.reefs[c.reef].centroid.lon), y0 = f.y(d.reefs[c.reef].centroid.lat);
    const double x = x0 + 13, y = y0 + 13;
    s << "<line x1='" << num(x0, 2) << "' y1='" << num(y0, 2) << "' x2='" << num(x, 2) << "' y2='" << num(y, 2)
      << "' stroke='#000' stroke-width='1'/><circle class='cull-site' data-rank='" << c.rank << "' cx='"
      << num(x, 2) << "' cy='" << num(y, 2) << "' r='9' fill='#fff' stroke='#000' stroke-width='1.6'/><text x='"
      << num(x, 2) << "' y='" << num(y + 4, 2) << "' text-anchor='middle'>" << c.rank << "</text>\n";
  }
  s << "</g>\n";
  {  // names of priority reefs and cull sites (all reefs when few)
    std::vector<bool> named(d.reefs.size(), d.reefs.size() <= 25);
    for (std::size_t i = 0; i < d.reefs.size(); ++i) named[i] = named[i] || is_priority(d, static_cast<int>(i));
    for (const auto& c : d.ranking) {
      if (c.reef >= 0) named[c.reef] = true;
    }
    s << "<g class='labels' font-size='10.5' fill='#111' stroke='#fff' stroke-width='2.6' paint-order='stroke'>\n";
    for (std::size_t i = 0; i < d.reefs.size(); ++i) {
      if (!named[i]) continue;
      const auto& r = d.reefs[i];
      s << "<text x='" << num(f.x(r.centroid.lon) + 7, 2) << "' y='" << num(f.y(r.centroid.lat) - 6, 2) << "'>"
        << html_escape(r.name) << "</text>\n";
    }
    s << "</g>\n";
  }
  scale_and_north(s, f);
  // Legend, top left.
  const double lx = f.left + 10, ly = f.top + 10;
  s << "<g class='legend' font-size='11'><rect x='" << num(lx, 2) << "' y='" << num(ly, 2)
    << "' width='200' height='" << (links.empty() ? 150 : 184) << "' fill='#fff' fill-opacity='0.9' stroke='#999'/>";
  double yy = ly + 16;
  for (const char* role : {"source", "sink", "exchange", "isolated"}) {
    s << "<rect x='" << num(lx + 8, 2) << "' y='" << num(yy - 9, 2) << "' width='14' height='11' fill='"
      << role_colour(role) << "' stroke='#3b3b3b' stroke-width='0.7'/><text x='" << num(lx + 28, 2) << "' y='"
      << num(yy, 2) << "'>" << role << " reef</text>";
    yy += 17;
  }
  s << "<path d='M" << num(lx + 15, 2) << "," << num(yy - 10, 2) << "l2,5h5l-4,3l2,5l-5,-3l-5,3l2,-5l-4,-3h5z' "
       "fill='#fff' stroke='#000'/><text x='"
    << num(lx + 28, 2) << "' y='" << num(yy, 2) << "'>priority reef (thick outline)</text>";
  yy += 19;
  s << "<circle cx='" << num(lx + 15, 2) << "' cy='" << num(yy - 4, 2)
    << "' r='7' fill='#fff' stroke='#000' stroke-width='1.4'/><text x='" << num(lx + 15, 2) << "' y='"
    << num(yy, 2) << "' text-anchor='middle' font-size='9' font-weight='bold'>1</text><text x='"
    << num(lx + 28, 2) << "' y='" << num(yy, 2) << "'>recommended cull site, rank</text>";
  yy += 18;
  s << "<path d='M" << num(lx + 15, 2) << "," << num(yy - 9, 2) << "l4.5,4.5l-4.5,4.5l-4.5,-4.5z' fill='#5b2a86'/>"
    << "<text x='" << num(lx + 28, 2) << "' y='" << num(yy, 2) << "'>spawning aggregation</text>";
  yy += 18;
  s << "<rect x='" << num(lx + 8, 2) << "' y='" << num(yy - 9, 2)
    << "' width='14' height='11' fill='#d8cfbd' stroke='#6d5f48'/><text x='" << num(lx + 28, 2) << "' y='"
    << num(yy, 2) << "'>land (currents mask)</text>";
  yy += 18;
  if (!links.empty()) {
    s << "<text x='" << num(lx + 8, 2) << "' y='" << num(yy, 2) << "'>larval links (width = probability)</text>";
    yy += 16;
    double lxx = lx + 8;
    for (double frac : {1.0, 0.5, 0.1}) {
      const double wd = 0.8 + 7.2 * frac;
      s << "<line x1='" << num(lxx, 2) << "' y1='" << num(yy - 4, 2) << "' x2='" << num(lxx + 22, 2) << "' y2='"
        << num(yy - 4, 2) << "' stroke='#1d2a33' stroke-opacity='0.62' stroke-width='" << num(wd, 2)
        << "'/><text x='" << num(lxx + 25, 2) << "' y='" << num(yy, 2) << "' font-size='10'>" << sig(frac * pmax, 2)
        << "</text>";
      lxx += 62;
    }
  }
  s << "</g>\n</svg>\n";
  return s.str();
}

std::string svg_settlement_map(const BriefingData& d) {
  const MapFrame f = map_frame(d, kMapLeft, kMapTop, kMapWidth);
  const double w = f.left + f.width + 12, h = f.top + f.height + 30;
  std::ostringstream s;
  s << svg_open(w, h, "Map of settlement probability by reef");
  base_map(s, d, f);
  double pmax = 0;
  for (const auto& r : d.results) pmax = std::max(pmax, r.settle_probability);
  for (std::size_t i = 0; i < d.reefs.size(); ++i) {
    const double p = i < d.results.size() ? d.results[i].settle_probability : 0.0;
    const std::string fill = p > 0 ? ramp(kHeat, 0.12 + 0.88 * std::sqrt(p / pmax)) : "#ffffff";
    s << "<path class='reef' data-reef='" << html_escape(d.reefs[i].id) << "' data-p='" << sig(p, 6) << "' d='"
      << polygon_path(f, d.reefs[i]) << "' fill='" << fill << "' stroke='#3b3b3b' stroke-width='0.7'><title>"
      << html_escape(d.reefs[i].name) << ": " << sig(100 * p) << " % of all released larvae settle here</title></path>\n";
  }
  scale_and_north(s, f);
  const double lx = f.left + 10, ly = f.top + 10;
  s << "<g class='legend' font-size='11'><rect x='" << num(lx, 2) << "' y='" << num(ly, 2)
    << "' width='230' height='62' fill='#fff' fill-opacity='0.9' stroke='#999'/><text x='" << num(lx + 8, 2)
    << "' y='" << num(ly + 15, 2) << "'>share of released larvae settling (%)</text>";
  for (int k = 0; k <= 5; ++k) {
    const double t = k / 5.0, p = pmax * t * t;  // colour is linear in sqrt(p)
    s << "<rect x='" << num(lx + 8 + k * 35, 2) << "' y='" << num(ly + 22, 2) << "' width='35' height='12' fill='"
      << (k == 0 ? "#ffffff" : ramp(kHeat, 0.12 + 0.88 * t)) << "' stroke='#888' stroke-width='0.5'/><text x='"
      << num(lx + 8 + k * 35, 2) << "' y='" << num(ly + 48, 2) << "' font-size='9'>" << sig(100 * p, 2) << "</text>";
  }
  s << "</g>\n</svg>\n";
  return s.str();
}

namespace {
// Axes box with y ticks from 0 to ymax; returns nothing, writes into s.
void y_axis(std::ostringstream& s, double left, double top, double width, double height, double ymax,
            const std::string& label) {
  const double step = nice_step(ymax, 5);
  for (double v = 0; v <= ymax + 1e-9 * ymax; v += step) {
    const double y = top + height - v / ymax * height;
    s << "<line x1='" << num(left, 2) << "' y1='" << num(y, 2) << "' x2='" << num(left + width, 2) << "' y2='"
      << num(y, 2) << "' stroke='#e3e3e3'/><text x='" << num(left - 6, 2) << "' y='" << num(y + 4, 2)
      << "' text-anchor='end' font-size='11'>" << sig(v, 4) << "</text>";
  }
  s << "<text transform='translate(" << num(left - 46, 2) << "," << num(top + height / 2, 2)
    << ") rotate(-90)' text-anchor='middle' font-size='12'>" << html_escape(label) << "</text>\n";
}
}  // namespace

std::string svg_budget_curve(const BriefingData& d) {
  const double left = 70, top = 14, width = 560, height = 260;
  std::ostringstream s;
  s << svg_open(left + width + 20, top + height + 52, "Recruitment averted against the effort budget");
  double xmax = 0, ymax = 0;
  for (const auto& c : d.curve) {
    xmax = std::max(xmax, c.budget_days);
    ymax = std::max(ymax, c.averted_pct);
  }
  xmax = xmax > 0 ? xmax : 1;
  ymax = ymax > 0 ? nice_step(ymax, 5) * std::ceil(ymax / nice_step(ymax, 5)) : 1;
  y_axis(s, left, top, width, height, ymax, "% averted on priority reefs");
  const double xstep = nice_step(xmax, 8);
  for (double v = 0; v <= xmax + 1e-9; v += xstep) {
    const double x = left + v / xmax * width;
    s << "<line x1='" << num(x, 2) << "' y1='" << num(top + height, 2) << "' x2='" << num(x, 2) << "' y2='"
      << num(top + height + 5, 2) << "' stroke='#333'/><text x='" << num(x, 2) << "' y='" << num(top + height + 18, 2)
      << "' text-anchor='middle' font-size='11'>" << sig(v, 4) << "</text>";
  }
  s << "<text x='" << num(left + width / 2, 2) << "' y='" << num(top + height + 40, 2)
    << "' text-anchor='middle' font-size='12'>effort budget (vessel-days, culling plus travel)</text>\n";
  s << "<rect x='" << num(left, 2) << "' y='" << num(top, 2) << "' width='" << num(width, 2) << "' height='"
    << num(height, 2) << "' fill='none' stroke='#333'/>\n";
  std::ostringstream pts;
  for (const auto& c : d.curve) {
    pts << num(left + c.budget_days / xmax * width, 2) << "," << num(top + height - c.averted_pct / ymax * height, 2) << " ";
  }
  s << "<polyline class='curve' fill='none' stroke='#2f6fae' stroke-width='2.5' points='" << pts.str() << "'/>\n";
  for (const auto& c : d.curve) {
    s << "<circle class='curve-point' data-budget='" << sig(c.budget_days, 6) << "' data-value='"
      << sig(c.averted_pct, 6) << "' cx='" << num(left + c.budget_days / xmax * width, 2) << "' cy='"
      << num(top + height - c.averted_pct / ymax * height, 2) << "' r='3.5' fill='#2f6fae'><title>"
      << sig(c.budget_days) << " vessel-days: " << sig(c.averted_pct) << " % averted, " << c.reefs
      << " reef(s)</title></circle>\n";
  }
  s << "</svg>\n";
  return s.str();
}

std::string svg_robustness(const BriefingData& d) {
  const double left = 170, top = 24, width = 440, row = 26;
  const double height = row * static_cast<double>(std::max<std::size_t>(1, d.ranking.size()));
  std::ostringstream s;
  s << svg_open(left + width + 150, top + height + 46, "Contribution of each cull site across spawning events");
  double xmax = 0;
  for (const auto& c : d.ranking) xmax = std::max({xmax, c.member_mean, c.member_p10});
  xmax = xmax > 0 ? nice_step(xmax, 5) * std::ceil(xmax / nice_step(xmax, 5)) : 1;
  const double xstep = nice_step(xmax, 5);
  for (double v = 0; v <= xmax * (1 + 1e-9); v += xstep) {
    const double x = left + v / xmax * width;
    s << "<line x1='" << num(x, 2) << "' y1='" << num(top, 2) << "' x2='" << num(x, 2) << "' y2='"
      << num(top + height, 2) << "' stroke='#e3e3e3'/><text x='" << num(x, 2) << "' y='" << num(top + height + 16, 2)
      << "' text-anchor='middle' font-size='11'>" << sig(v, 3) << "</text>";
  }
  s << "<text x='" << num(left + width / 2, 2) << "' y='" << num(top + height + 36, 2)
    << "' text-anchor='middle' font-size='12'>recruits averted by the site (weighted larvae)</text>";
  s << "<text x='" << num(left + width + 8, 2) << "' y='" << num(top - 8, 2)
    << "' font-size='11'>in best plan of</text>";
  for (std::size_t k = 0; k < d.ranking.size(); ++k) {
    const auto& c = d.ranking[k];
    const double y = top + row * static_cast<double>(k);
    const std::string name = c.reef >= 0 ? d.reefs[c.reef].name : c.reef_id;
    s << "<text x='" << num(left - 8, 2) << "' y='" << num(y + 17, 2) << "' text-anchor='end' font-size='12'>"
      << c.rank << ". " << html_escape(name) << "</text>";
    s << "<rect class='bar' data-value='" << sig(c.member_mean, 6) << "' x='" << num(left, 2) << "' y='"
      << num(y + 5, 2) << "' width='" << num(c.member_mean / xmax * width, 2) << "' height='15' fill='"
      << (c.one_night ? "#e6b83a" : "#2f6fae") << "'/>";
    const double xp = left + c.member_p10 / xmax * width, xm = left + c.member_mean / xmax * width;
    s << "<path class='whisker' data-low='" << sig(c.member_p10, 6) << "' d='M" << num(xp, 2) << "," << num(y + 12.5, 2)
      << "H" << num(xm, 2) << "M" << num(xp, 2) << "," << num(y + 6, 2) << "V" << num(y + 19, 2)
      << "' stroke='#111' stroke-width='1.6' fill='none'/>";
    s << "<text x='" << num(left + width + 8, 2) << "' y='" << num(y + 17, 2) << "' font-size='11'>"
      << num(100 * c.in_best_share, 0) << " % of events" << (c.one_night ? " \u26a0 one night" : "") << "</text>\n";
  }
  s << "<line x1='" << num(left, 2) << "' y1='" << num(top, 2) << "' x2='" << num(left, 2) << "' y2='"
    << num(top + height, 2) << "' stroke='#333'/></svg>\n";
  return s.str();
}

std::string svg_matrix(const BriefingData& d) {
  const std::size_t n = d.reefs.size();
  const std::vector<int> order = position_order(d.reefs);
  const double cell = n == 0 ? 10 : std::clamp(560.0 / static_cast<double>(n), 3.0, 22.0);
  const bool labels = n <= 45;
  const double left = labels ? 130 : 40, top = labels ? 120 : 30;
  const double side = cell * static_cast<double>(n);
  std::ostringstream s;
  s << svg_open(left + side + 110, top + side + 30, "Connectivity matrix, reefs ordered by position");
  double pmax = 0, pmin = INFINITY;
  for (const auto& r : d.matrix) {
    for (double v : r) {
      if (v > 0) {
        pmax = std::max(pmax, v);
        pmin = std::min(pmin, v);
      }
    }
  }
  if (!(pmax > 0)) pmax = pmin = 1;
  const double lo = std::log10(std::max(pmin, pmax * 1e-4)), hi = std::log10(pmax);
  auto colour = [&](double v) { return ramp(kHeat, hi > lo ? (std::log10(v) - lo) / (hi - lo) : 1.0); };
  s << "<rect x='" << num(left, 2) << "' y='" << num(top, 2) << "' width='" << num(side, 2) << "' height='"
    << num(side, 2) << "' fill='#ffffff' stroke='#333'/>\n";
  for (std::size_t a = 0; a < n; ++a) {
    for (std::size_t b = 0; b < n; ++b) {
      const int i = order[a], j = order[b];
      const double v = static_cast<std::size_t>(i) < d.matrix.size() && static_cast<std::size_t>(j) < d.matrix[i].size()
                           ? d.matrix[i][j] : 0.0;
      if (!(v > 0)) continue;
      s << "<rect class='cell' data-from='" << html_escape(d.reefs[i].id) << "' data-to='" << html_escape(d.reefs[j].id)
        << "' data-p='" << sig(v, 6) << "' x='" << num(left + cell * b, 2) << "' y='" << num(top + cell * a, 2)
        << "' width='" << num(cell, 2) << "' height='" << num(cell, 2) << "' fill='" << colour(std::max(v, std::pow(10, lo)))
        << "'><title>" << html_escape(d.reefs[i].name) << " \u2192 " << html_escape(d.reefs[j].name) << ": P = "
        << sig(v) << "</title></rect>";
    }
    s << "\n";
  }
  if (labels) {
    for (std::size_t a = 0; a < n; ++a) {
      const auto& r = d.reefs[order[a]];
      s << "<text x='" << num(left - 4, 2) << "' y='" << num(top + cell * (a + 0.5) + 3.5, 2)
        << "' text-anchor='end' font-size='10'>" << html_escape(r.name) << "</text>";
      s << "<text transform='translate(" << num(left + cell * (a + 0.5) + 3.5, 2) << "," << num(top - 4, 2)
        << ") rotate(-60)' font-size='10'>" << html_escape(r.name) << "</text>\n";
    }
  }
  s << "<text x='" << num(left - 4, 2) << "' y='" << num(top - (labels ? 100 : 10), 2)
    << "' font-size='11' text-anchor='end'>from \u2193 / to \u2192</text>";
  // Colour bar (log scale).
  const double bx = left + side + 20;
  for (int k = 0; k < 5; ++k) {
    const double t = k / 4.0;
    s << "<rect x='" << num(bx, 2) << "' y='" << num(top + 24 * (4 - k), 2) << "' width='16' height='24' fill='"
      << ramp(kHeat, t) << "'/><text x='" << num(bx + 22, 2) << "' y='" << num(top + 24 * (4 - k) + 16, 2)
      << "' font-size='10'>" << sig(std::pow(10, lo + t * (hi - lo)), 2) << "</text>";
  }
  s << "<text x='" << num(bx, 2) << "' y='" << num(top + 140, 2) << "' font-size='10'>P (log scale)</text>"
    << "<text x='" << num(bx, 2) << "' y='" << num(top + 154, 2) << "' font-size='10'>white: none seen</text>";
  s << "</svg>\n";
  return s.str();
}

}  // namespace cullcast::report
