// Writers for the view-factor matrix: CSV, Matrix Market, NumPy .npy, JSON, and the terminal
// table. Every file holds N rows (emitters) by N + 1 columns (receivers, then surroundings),
// with numbers as the shortest text that reads back as the same double (core/text.hpp).
#include "hearthray/io.hpp"

#include <algorithm>
#include <cctype>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <nlohmann/json.hpp>
#include <ostream>
#include <string>
#include <vector>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "outputs/atomic_file.hpp"
#include "outputs/target_json.hpp"

namespace hearthray {
// RFC 4180: a field with a comma, a double quote or a line break is quoted, quotes doubled.
std::string csv_field(const std::string& s) {
  if (s.find_first_of(",\"\r\n") == std::string::npos) return s;
  std::string out = "\"";
  for (char c : s) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

namespace {

// Writers need the full square matrix: a shard's rows carry no names of their own.
void check_factors(const ViewFactors& vf) {
  const std::size_t n = vf.size();
  if (vf.areas.size() != n || static_cast<std::size_t>(vf.F.rows()) != n ||
      static_cast<std::size_t>(vf.F.cols()) != n || vf.rays.size() != n ||
      vf.to_surroundings.size() != n || vf.to_back_faces.size() != n) {
    throw InputError("cannot write view factors: expected a " + std::to_string(n) + " x " +
                     std::to_string(n) + " matrix with " + std::to_string(n) +
                     " names, areas, ray counts and surroundings factors, but got a " +
                     std::to_string(vf.F.rows()) + " x " + std::to_string(vf.F.cols()) +
                     " matrix (merge shards before writing)");
  }
}

// Row i as N + 1 dense values, surroundings last.
std::vector<double> dense_row(const ViewFactors& vf, std::size_t i) {
  std::vector<double> row(vf.size() + 1, 0.0);
  for (SparseMatrix::InnerIterator it(vf.F, static_cast<Eigen::Index>(i)); it; ++it) {
    row[static_cast<std::size_t>(it.col())] = it.value();
  }
  row.back() = vf.to_surroundings[i];
  return row;
}

std::string one_line(std::string s) {
  std::replace(s.begin(), s.end(), '\n', ' ');
  std::replace(s.begin(), s.end(), '\r', ' ');
  return s;
}

std::string lower(std::string s) {
  for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}

}  // namespace

void write_factors_csv(std::ostream& out, const ViewFactors& vf) {
  check_factors(vf);
  out << "surface";
  for (const std::string& name : vf.names) out << ',' << csv_field(name);
  out << ",surroundings\n";
  for (std::size_t i = 0; i < vf.size(); ++i) {
    out << csv_field(vf.names[i]);
    for (double v : dense_row(vf, i)) out << ',' << shortest(v);
    out << '\n';
  }
}

void write_factors_mtx(std::ostream& out, const ViewFactors& vf) {
  check_factors(vf);
  const std::size_t n = vf.size();
  std::size_t entries = static_cast<std::size_t>(vf.F.nonZeros());
  for (double s : vf.to_surroundings) entries += s != 0 ? 1 : 0;
  out << "%%MatrixMarket matrix coordinate real general\n";
  out << "% hearthray view factors: row i = emitting patch i, column j = receiving patch j,\n";
  out << "% column " << n + 1 << " = surroundings (rays that hit nothing)\n";
  out << "% " << (vf.smoothed ? "smoothed (reciprocity and closure enforced)" : "raw Monte Carlo")
      << "\n";
  out << "% patches (index: name):\n";
  for (std::size_t i = 0; i < n; ++i) out << "% " << i + 1 << ": " << one_line(vf.names[i]) << "\n";
  out << n << ' ' << n + 1 << ' ' << entries << '\n';
  for (std::size_t i = 0; i < n; ++i) {
    for (SparseMatrix::InnerIterator it(vf.F, static_cast<Eigen::Index>(i)); it; ++it) {
      out << i + 1 << ' ' << it.col() + 1 << ' ' << shortest(it.value()) << '\n';
    }
    if (vf.to_surroundings[i] != 0) {
      out << i + 1 << ' ' << n + 1 << ' ' << shortest(vf.to_surroundings[i]) << '\n';
    }
  }
}

// NumPy format version 1.0 (numpy.lib.format): magic "\x93NUMPY", version 1.0, a little-endian
// uint16 header length, then a Python dict literal padded with spaces and ended by '\n' so that
// the data starts at a multiple of 64 bytes.
void write_factors_npy(std::ostream& out, const ViewFactors& vf) {
  check_factors(vf);
  const std::size_t n = vf.size();
  std::string header = "{'descr': '<f8', 'fortran_order': False, 'shape': (" + std::to_string(n) +
                       ", " + std::to_string(n + 1) + "), }";
  const std::size_t preamble = 10;  // magic (6) + version (2) + header length (2)
  const std::size_t total = (preamble + header.size() + 1 + 63) / 64 * 64;
  header.append(total - preamble - header.size() - 1, ' ');
  header += '\n';
  const auto length = static_cast<std::uint16_t>(header.size());
  const char preamble_bytes[10] = {'\x93',
                                   'N',
                                   'U',
                                   'M',
                                   'P',
                                   'Y',
                                   '\x01',
                                   '\x00',
                                   static_cast<char>(length & 0xff),
                                   static_cast<char>(length >> 8)};
  out.write(preamble_bytes, sizeof preamble_bytes);
  out << header;
  std::vector<char> bytes((n + 1) * 8);
  for (std::size_t i = 0; i < n; ++i) {
    const std::vector<double> row = dense_row(vf, i);
    for (std::size_t j = 0; j <= n; ++j) {
      std::uint64_t bits;
      std::memcpy(&bits, &row[j], sizeof bits);
      for (int b = 0; b < 8; ++b) bytes[j * 8 + b] = static_cast<char>((bits >> (8 * b)) & 0xff);
    }
    out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
  }
}

void write_factors_json(std::ostream& out, const ViewFactors& vf, const FactorReportInfo& info) {
  check_factors(vf);
  using json = nlohmann::ordered_json;  // keys in the order written, names first
  json F = json::array(), se = json::array();
  for (std::size_t i = 0; i < vf.size(); ++i) {
    const std::vector<double> row = dense_row(vf, i);
    json se_row = json::array();
    for (double f : row) se_row.push_back(vf.standard_error(i, f));
    F.push_back(row);
    se.push_back(std::move(se_row));
  }
  json doc;
  doc["names"] = vf.names;
  doc["areas_m2"] = vf.areas;
  doc["rays"] = vf.rays;
  doc["columns"] = "receiving patches in the order of names, then the surroundings";
  doc["F"] = std::move(F);
  doc["standard_error"] = std::move(se);
  doc["to_back_faces"] = vf.to_back_faces;
  doc["smoothed"] = vf.smoothed;
  doc["max_correction_sigma"] = vf.max_correction_sigma;
  doc["info"] = {{"scene", info.scene},
                 {"seed", info.seed},
                 {"sampler", info.sampler},
                 {"rays_per_patch", info.rays_per_patch},
                 {"trace_seconds", info.trace_seconds},
                 {"rays_per_second", info.rays_per_second},
                 {"threads", info.threads},
                 {"smoothing", info.smoothing},
                 {"smoothing_iterations", info.smoothing_iterations},
                 {"max_row_error", info.max_row_error},
                 {"max_reciprocity_error", info.max_reciprocity_error},
                 {"warnings", info.warnings},
                 {"target", target_json(info.target)}};
  doc["caution"] =
      "Engineering estimate only. View factors are Monte Carlo estimates for the mesh as given: "
      "each carries the standard error listed beside it, and the mesh approximates the real "
      "geometry.";
  // Indented for a small matrix a person may read; compact for large ones (one number per line
  // would multiply the size).
  out << doc.dump(vf.size() <= 12 ? 2 : -1, ' ', false, json::error_handler_t::replace) << '\n';
}

void write_factors_file(const std::string& path, const ViewFactors& vf,
                        const FactorReportInfo& info, const Scene* scene, const PatchSet* patches) {
  const std::size_t dot = path.find_last_of('.');
  const std::size_t slash = path.find_last_of("/\\");
  const std::string extension =
      (dot == std::string::npos || (slash != std::string::npos && dot < slash))
          ? std::string()
          : lower(path.substr(dot));
  if (extension == ".h5") {
    if (!scene || !patches)
      throw InputError("cannot write '" + path + "': an HDF5 matrix file needs the patches");
    check_factors(vf);
    write_factors_hdf5(path, vf, *scene, *patches, info);
    return;
  }
  if (extension != ".csv" && extension != ".mtx" && extension != ".npy" && extension != ".json") {
    throw InputError("cannot write '" + path + "': unknown file type '" + extension +
                     "'; use one of .csv, .mtx, .npy, .json, .h5");
  }
  check_factors(vf);  // before the file is created, so a bad call leaves nothing behind
  write_stream_atomically(path, [&](std::ostream& file) {
    if (extension == ".csv") {
      write_factors_csv(file, vf);
    } else if (extension == ".mtx") {
      write_factors_mtx(file, vf);
    } else if (extension == ".npy") {
      write_factors_npy(file, vf);
    } else {
      write_factors_json(file, vf, info);
    }
  });
}

namespace {

// `s` cut to `width` columns (a trailing '~' marks the cut, never inside a UTF-8 sequence),
// padded on the right or on the left.
std::string fit(const std::string& s, std::size_t width, bool right_align = false) {
  std::string text = s;
  if (display_width(text) > width) {
    std::size_t kept = 0, bytes = 0;
    while (bytes < text.size() && kept < width - 1) {
      ++bytes;
      while (bytes < text.size() && (static_cast<unsigned char>(text[bytes]) & 0xC0) == 0x80) {
        ++bytes;
      }
      ++kept;
    }
    text = text.substr(0, bytes) + "~";
  }
  const std::string pad(width - display_width(text), ' ');
  return right_align ? pad + text : text + pad;
}

constexpr std::size_t kMatrixLimit = 12;  // more patches than this: a list of non-zeros
constexpr std::size_t kCell = 10;

double row_total(const ViewFactors& vf, std::size_t i) {
  double sum = vf.to_surroundings[i] + vf.to_back_faces[i];
  for (SparseMatrix::InnerIterator it(vf.F, static_cast<Eigen::Index>(i)); it; ++it) {
    sum += it.value();
  }
  return sum;
}

void print_matrix(std::ostream& out, const ViewFactors& vf, bool show_back) {
  const std::size_t n = vf.size();
  std::size_t label = 12;
  for (const std::string& name : vf.names) label = std::max(label, display_width(name) + 1);
  label = std::min<std::size_t>(label, 24);
  out << fit("from \\ to", label);
  for (const std::string& name : vf.names) out << fit(name, kCell - 1, true) << ' ';
  out << fit("surround.", kCell - 1, true) << ' ';
  if (show_back) out << fit("back face", kCell - 1, true) << ' ';
  out << fit("row sum", kCell - 1, true) << '\n';
  for (std::size_t i = 0; i < n; ++i) {
    std::vector<double> row = dense_row(vf, i);
    if (show_back) row.push_back(vf.to_back_faces[i]);
    std::string values = fit(vf.names[i], label), errors(label, ' ');
    for (double f : row) {
      values += fit(f == 0 ? "0" : rounded("%.5f", f), kCell - 1, true) + ' ';
      errors +=
          fit(f == 0 ? "" : "\u00b1" + rounded("%.5f", vf.standard_error(i, f)), kCell - 1, true) +
          ' ';
    }
    values += fit(rounded("%.5f", row_total(vf, i)), kCell - 1, true);
    errors.erase(errors.find_last_not_of(' ') + 1);
    out << values << '\n' << errors << '\n';
  }
}

void print_list(std::ostream& out, const ViewFactors& vf) {
  const std::size_t n = vf.size();
  const std::size_t width = 24;
  out << fit("emitter", width) << ' ' << fit("receiver", width) << ' ' << fit("F", 9, true) << ' '
      << fit("\u00b1 s.e.", 9, true) << '\n';
  for (std::size_t i = 0; i < n; ++i) {
    const std::string emitter = fit(vf.names[i], width);
    auto line = [&](const std::string& receiver, double f) {
      out << emitter << ' ' << fit(receiver, width) << ' ' << fit(rounded("%.6f", f), 9, true)
          << ' ' << fit(rounded("%.6f", vf.standard_error(i, f)), 9, true) << '\n';
    };
    for (SparseMatrix::InnerIterator it(vf.F, static_cast<Eigen::Index>(i)); it; ++it) {
      if (it.value() != 0) line(vf.names[static_cast<std::size_t>(it.col())], it.value());
    }
    if (vf.to_surroundings[i] != 0) line("(surroundings)", vf.to_surroundings[i]);
    if (vf.to_back_faces[i] != 0) line("(back faces)", vf.to_back_faces[i]);
    out << emitter << ' ' << fit("(row sum)", width) << ' '
        << fit(rounded("%.6f", row_total(vf, i)), 9, true) << '\n';
  }
}

}  // namespace

void print_factors_table(std::ostream& out, const ViewFactors& vf) {
  check_factors(vf);
  const std::size_t n = vf.size();
  const bool show_back = std::any_of(vf.to_back_faces.begin(), vf.to_back_faces.end(),
                                     [](double f) { return f != 0; });
  out << "View factors F (row: emitting patch, column: receiving patch), " << n << " patches, "
      << (vf.smoothed ? "smoothed (reciprocity and row sums enforced)" : "raw Monte Carlo") << '\n';
  if (n == 0) return;
  if (n <= kMatrixLimit) {
    print_matrix(out, vf, show_back);
  } else {
    print_list(out, vf);
  }
  const auto [least, most] = std::minmax_element(vf.rays.begin(), vf.rays.end());
  out << "\u00b1 is one standard error sqrt(F(1-F)/N), N = rays emitted per patch ("
      << (*least == *most ? std::to_string(*least)
                          : std::to_string(*least) + " to " + std::to_string(*most))
      << ")";
  if (vf.smoothed) {
    out << "; largest smoothing correction " << rounded("%.2f", vf.max_correction_sigma)
        << " standard errors";
  }
  out << '\n';
  if (show_back) {
    out << "back face: rays absorbed on the back of one-sided surfaces (check their normals)\n";
  }
}

}  // namespace hearthray
