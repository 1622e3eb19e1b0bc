// Writing simulated bearings, their truth and the GPX tracks (docs/planning.md): plain text
// formats, written atomically.
#include <fcntl.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

#include "detail/text_output.hpp"
#include "lobfix/error.hpp"
#include "lobfix/simulate.hpp"
#include "lobfix/time.hpp"

namespace lobfix {

namespace detail {

void write_text_atomically(const std::string& path, const std::string& text) {
  namespace fs = std::filesystem;
  static std::atomic<unsigned> serial{0};
  const fs::path target(path);
  const fs::path temp = target.parent_path() / ("." + target.filename().string() + ".tmp-" +
                                                std::to_string(static_cast<long>(::getpid())) +
                                                "-" + std::to_string(serial.fetch_add(1)));
  const auto fail = [&](const std::string& what) {
    const std::string reason = std::strerror(errno);
    std::error_code ec;
    fs::remove(temp, ec);
    throw OutputError("cannot write " + path + ": " + what + ": " + reason);
  };
  const int fd = ::open(temp.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0666);
  if (fd < 0)
    fail("cannot create a file there");
  std::size_t done = 0;
  while (done < text.size()) {
    const ssize_t n = ::write(fd, text.data() + done, text.size() - done);
    if (n < 0 && errno == EINTR)
      continue;
    if (n <= 0) {
      ::close(fd);
      fail("writing failed");
    }
    done += static_cast<std::size_t>(n);
  }
  if (::fsync(fd) != 0) {
    ::close(fd);
    fail("flushing to disk failed");
  }
  if (::close(fd) != 0)
    fail("closing failed");
  std::error_code ec;
  fs::rename(temp, target, ec);
  if (ec) {
    fs::remove(temp, ec);
    throw OutputError("cannot write " + path + ": cannot move the finished file into place");
  }
}

}  // namespace detail

namespace {

std::string csv_cell(const std::string& s) {
  if (s.find_first_of(",\"\n") == std::string::npos)
    return s;
  std::string out = "\"";
  for (const char c : s) {
    if (c == '"')
      out += '"';
    out += c;
  }
  return out + "\"";
}

std::string xml_text(const std::string& s) {
  std::string out;
  for (const char c : s) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

// Rounded to the written decimals first, so that no bearing reads 360.000.
double rounded360(double deg) {
  return wrap_deg360(std::round(deg * 1000.0) / 1000.0);
}

}  // namespace

std::string format_simulated_csv(const std::vector<SimulatedBearing>& bearings,
                                 const std::string& signal) {
  std::string text =
      "time,station,signal,lat,lon,bearing_deg,reference,heading_deg,heading_sigma_deg,"
      "sigma_deg\n";
  char line[256];
  for (const SimulatedBearing& b : bearings) {
    text += format_iso8601_utc(b.time_unix_ns) + "," + csv_cell(b.station) + "," + csv_cell(signal);
    if (b.relative) {
      std::snprintf(line, sizeof line, ",%.7f,%.7f,%.3f,relative,%.3f,%.3f,%.3f\n",
                    b.position.lat_deg, b.position.lon_deg, rounded360(b.bearing_deg),
                    rounded360(b.heading_deg), b.heading_sigma_deg, b.sigma_deg);
    } else {
      std::snprintf(line, sizeof line, ",%.7f,%.7f,%.3f,true,,,%.3f\n", b.position.lat_deg,
                    b.position.lon_deg, rounded360(b.bearing_deg), b.sigma_deg);
    }
    text += line;
  }
  return text;
}

std::string format_truth_csv(const std::vector<SimulatedBearing>& bearings) {
  std::string text =
      "row,time,station,transmitter_lat,transmitter_lon,true_bearing_deg,error_deg,wild\n";
  char line[256];
  for (std::size_t i = 0; i < bearings.size(); ++i) {
    const SimulatedBearing& b = bearings[i];
    const double seen = b.relative ? b.heading_deg + b.bearing_deg : b.bearing_deg;
    std::snprintf(line, sizeof line, "%zu,%s,%s,%.7f,%.7f,%.3f,%.3f,%d\n", i + 2,
                  format_iso8601_utc(b.time_unix_ns).c_str(), csv_cell(b.station).c_str(),
                  b.transmitter.lat_deg, b.transmitter.lon_deg, rounded360(b.true_azimuth_deg),
                  angle_diff_deg(seen, b.true_azimuth_deg), b.wild ? 1 : 0);
    text += line;
  }
  return text;
}

std::string format_tracks_gpx(const std::vector<SimulatedBearing>& bearings) {
  // Moving stations: their points in time order; the transmitter when it moves.
  std::vector<std::string> order;
  std::map<std::string, std::vector<const SimulatedBearing*>> points;
  std::vector<const SimulatedBearing*> all;
  for (const SimulatedBearing& b : bearings) {
    all.push_back(&b);
    if (points.find(b.station) == points.end())
      order.push_back(b.station);
    points[b.station].push_back(&b);
  }
  std::string text =
      "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
      "<gpx version=\"1.1\" creator=\"lobfix simulate\" "
      "xmlns=\"http://www.topografix.com/GPX/1/1\">\n";
  char line[256];
  const auto track = [&](const std::string& name, const std::vector<const SimulatedBearing*>& pts,
                         bool transmitter) {
    text += "  <trk>\n    <name>" + xml_text(name) + "</name>\n    <trkseg>\n";
    for (const SimulatedBearing* p : pts) {
      const LatLon& at = transmitter ? p->transmitter : p->position;
      std::snprintf(line, sizeof line,
                    "      <trkpt lat=\"%.7f\" lon=\"%.7f\"><time>%s</time></trkpt>\n", at.lat_deg,
                    at.lon_deg, format_iso8601_utc(p->time_unix_ns).c_str());
      text += line;
    }
    text += "    </trkseg>\n  </trk>\n";
  };
  const auto moved = [](const std::vector<const SimulatedBearing*>& pts, bool transmitter) {
    for (const SimulatedBearing* p : pts) {
      const LatLon& a = transmitter ? p->transmitter : p->position;
      const LatLon& b = transmitter ? pts.front()->transmitter : pts.front()->position;
      if (a.lat_deg != b.lat_deg || a.lon_deg != b.lon_deg)
        return true;
    }
    return false;
  };
  for (const std::string& name : order) {
    if (moved(points[name], false))
      track(name, points[name], false);
  }
  if (!all.empty() && moved(all, true))
    track("transmitter (truth)", all, true);
  text += "</gpx>\n";
  return text;
}

void write_simulated_csv(const std::string& path, const std::vector<SimulatedBearing>& bearings,
                         const std::string& signal) {
  detail::write_text_atomically(path, format_simulated_csv(bearings, signal));
}

void write_truth_csv(const std::string& path, const std::vector<SimulatedBearing>& bearings) {
  detail::write_text_atomically(path, format_truth_csv(bearings));
}

void write_tracks_gpx(const std::string& path, const std::vector<SimulatedBearing>& bearings) {
  detail::write_text_atomically(path, format_tracks_gpx(bearings));
}

}  // namespace lobfix
