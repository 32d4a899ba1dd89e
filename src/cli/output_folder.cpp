#include "output_folder.hpp"

#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <optional>
#include <set>
#include <stdexcept>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/version.hpp"

namespace hearthray::cli {

namespace fs = std::filesystem;
using json = nlohmann::json;

namespace {

constexpr const char* kPartial = "hearthray-partial-";
constexpr const char* kOld = "hearthray-old-";

// The test hooks of OutputFolder (see the header): end as a kill would, with no clean-up.
void exit_after_files_if_asked(std::size_t files) {
  const char* v = std::getenv("HEARTHRAY_TEST_EXIT_AFTER_FILES");
  if (v && std::to_string(files) == v) std::_Exit(9);
}
void exit_after_swap_if_asked() {
  if (std::getenv("HEARTHRAY_TEST_EXIT_AFTER_SWAP")) std::_Exit(9);
}

// `dir` made absolute, with symbolic links resolved, without a trailing "/" or ".".
fs::path resolved(const std::string& dir) {
  std::error_code ec;
  fs::path p = fs::weakly_canonical(fs::absolute(dir), ec);
  if (ec) p = fs::absolute(dir).lexically_normal();
  if (p.filename().empty() && p.has_parent_path() && p != p.root_path()) p = p.parent_path();
  return p;
}

bool process_alive(long pid) {
  if (pid <= 0 || pid == long(::getpid())) return false;  // our own id: an earlier process's
  return ::kill(pid_t(pid), 0) == 0 || errno == EPERM;
}

// Removes the hidden leftovers ".<stem><kPartial|kOld>PID" in `parent` whose process is gone
// (a run killed while writing, or between the swap and removing the previous files).
void remove_leftovers(const fs::path& parent, const std::string& stem) {
  std::error_code ec;
  for (fs::directory_iterator it(parent, ec), end; !ec && it != end; it.increment(ec)) {
    const std::string name = it->path().filename().string();
    for (const std::string& kind : {std::string(kPartial), std::string(kOld)}) {
      const std::string prefix = "." + stem + kind;
      if (name.size() <= prefix.size() || name.compare(0, prefix.size(), prefix) != 0) continue;
      const std::string pid = name.substr(prefix.size());
      if (pid.find_first_not_of("0123456789") != std::string::npos || pid.size() > 9) continue;
      std::error_code ignored;
      if (!process_alive(std::stol(pid))) fs::remove_all(it->path(), ignored);
    }
  }
}

// The files a manifest names ("files", or "view_factors"/"files" in reports of version 0.x),
// or nothing when `path` is no hearthray manifest.
std::optional<std::set<std::string>> manifest_files(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  const json j = json::parse(in, nullptr, false);
  if (!j.is_object() || !j.contains("tool") || !j["tool"].is_string() ||
      j["tool"].get<std::string>().rfind("hearthray", 0) != 0)
    return std::nullopt;
  const json* files = j.contains("files") ? &j["files"] : nullptr;
  if (!files && j.contains("view_factors") && j["view_factors"].is_object() &&
      j["view_factors"].contains("files"))
    files = &j["view_factors"]["files"];
  if (!files || !files->is_array()) return std::nullopt;
  std::set<std::string> names;
  for (const json& f : *files)
    if (f.is_string()) names.insert(f.get<std::string>());
  return names;
}

// A temporary file of a single-file write ("NAME.part" or "NAME.partPID"), left by a kill.
bool temporary_name(const std::string& name) {
  const std::size_t at = name.rfind(".part");
  return at != std::string::npos &&
         name.find_first_not_of("0123456789", at + 5) == std::string::npos;
}

}  // namespace

void check_output_folder(const std::string& dir) {
  if (dir.empty()) throw InputError("the output folder has no name");
  const fs::path target = resolved(dir);
  std::error_code ec;
  const fs::path here = fs::weakly_canonical(fs::current_path(ec), ec);
  const auto [end, unused] = std::mismatch(target.begin(), target.end(), here.begin(), here.end());
  if (target.filename().empty() || end == target.end()) {
    throw InputError("cannot use '" + dir +
                     "' as the output folder: it is the current folder or holds it, and an "
                     "output folder is replaced whole; name a folder for the results, e.g. -o out");
  }
  const fs::file_status status = fs::status(target, ec);
  if (!fs::exists(status)) return;
  if (!fs::is_directory(status))
    throw InputError("the output folder '" + dir + "' is a file, not a folder");
  std::vector<std::string> entries;
  for (fs::directory_iterator it(target, ec), e; !ec && it != e; it.increment(ec))
    entries.push_back(it->path().filename().string());
  if (ec) throw InputError("cannot read the output folder '" + dir + "': " + ec.message());
  if (entries.empty()) return;
  const auto ours = manifest_files(target / kManifestName);
  std::vector<std::string> foreign;
  for (const std::string& name : entries)
    if (!ours || (name != kManifestName && !ours->count(name) && !temporary_name(name)))
      foreign.push_back(name);
  if (foreign.empty()) return;
  std::sort(foreign.begin(), foreign.end());
  throw InputError(
      "the output folder '" + dir + "' holds " +
      (ours ? "files its report.json does not name (" + join_at_most(foreign, 5) + ")"
            : "files and no hearthray report.json (" + join_at_most(foreign, 5) + ")") +
      ": an output folder is replaced whole, so hearthray writes only to a new or empty folder "
      "or to one a previous hearthray run wrote; move those files or choose another folder");
}

json folder_manifest(const std::string& command, const std::vector<std::string>& scenes,
                     const std::vector<std::string>& files) {
  return {{"tool", "hearthray"},
          {"version", kVersion},
          {"command", command},
          {"scenes", scenes},
          {"files", files}};
}

OutputFolder::OutputFolder(const std::string& dir) : asked_(dir) {
  check_output_folder(dir);
  target_ = resolved(dir);
  const fs::path parent = target_.parent_path();
  std::error_code ec;
  fs::create_directories(parent, ec);
  if (ec || !fs::is_directory(parent))
    throw InputError("cannot create the output folder '" + dir + "'" +
                     (ec ? ": " + ec.message() : std::string()));
  remove_leftovers(parent, target_.filename().string() + ".");
  staging_ =
      parent / ("." + target_.filename().string() + "." + kPartial + std::to_string(::getpid()));
  fs::remove_all(staging_, ec);
  if (!fs::create_directory(staging_, ec) || ec)
    throw InputError("cannot create a folder beside the output folder '" + dir + "' to write into" +
                     (ec ? ": " + ec.message() : std::string()));
}

OutputFolder::~OutputFolder() {
  if (committed_) return;
  std::error_code ec;
  fs::remove_all(staging_, ec);
}

std::string OutputFolder::file(const std::string& name) {
  exit_after_files_if_asked(files_);
  ++files_;
  return (staging_ / name).string();
}

void OutputFolder::commit() {
  // The manifest names exactly the files of this run.
  const auto named = manifest_files(staging_ / kManifestName);
  std::set<std::string> written;
  for (const auto& entry : fs::directory_iterator(staging_))
    if (entry.path().filename() != kManifestName) written.insert(entry.path().filename().string());
  if (!named || *named != written)
    throw std::logic_error("the report.json of '" + asked_ + "' does not name its files");
  exit_after_files_if_asked(files_);
  check_output_folder(asked_);  // again: the folder may have changed during the run
  // A new or empty folder: one rename. Otherwise swap the two folders in one step and remove
  // the previous files; a file system without the swap (EINVAL) moves the old one aside first.
  if (::rename(staging_.c_str(), target_.c_str()) != 0) {
    if (::renameat2(AT_FDCWD, staging_.c_str(), AT_FDCWD, target_.c_str(), RENAME_EXCHANGE) != 0) {
      if (errno != EINVAL && errno != ENOSYS)
        throw InputError("cannot put the output folder '" + asked_ +
                         "' in place: " + std::strerror(errno));
      const fs::path aside = target_.parent_path() / ("." + target_.filename().string() + "." +
                                                      kOld + std::to_string(::getpid()));
      fs::rename(target_, aside);
      fs::rename(staging_, target_);
      staging_ = aside;
    }
    exit_after_swap_if_asked();
    std::error_code ec;
    fs::remove_all(staging_, ec);  // now the previous run's files
  }
  committed_ = true;
}

void commit_with_report(OutputFolder& out, const std::function<void(std::ostream&)>& write,
                        const std::vector<std::string>& files, bool quiet) {
  {
    std::ofstream report(out.file(kManifestName), std::ios::binary | std::ios::trunc);
    if (report) write(report);
    report.close();
    if (!report) throw InputError("cannot write '" + out.target() + "/" + kManifestName + "'");
  }
  out.commit();
  if (quiet) return;
  std::cout << "\nwrote " << (fs::path(out.target()) / kManifestName).string();
  for (const std::string& name : files) std::cout << ", " << name;
  std::cout << "\n";
}

void write_manifest(OutputFolder& out, const json& manifest) {
  commit_with_report(
      out, [&](std::ostream& report) { report << manifest.dump(2) << '\n'; }, {}, true);
}

StagedFiles::~StagedFiles() {
  if (committed_) return;
  std::error_code ec;
  for (const auto& [folder, staging] : staging_) fs::remove_all(staging, ec);
}

std::string StagedFiles::file(const std::string& path) {
  const fs::path p(path);
  const fs::path folder = p.parent_path();  // as the user wrote it, for the messages
  auto it = staging_.find(folder);
  if (it == staging_.end()) {
    const fs::path real = folder.empty() ? fs::path(".") : folder;
    std::error_code ec;
    if (!fs::is_directory(real, ec))
      throw InputError("cannot write '" + path + "': no folder '" + real.string() + "'");
    remove_leftovers(real, "");
    const fs::path staging = real / ("." + std::string(kPartial) + std::to_string(::getpid()));
    fs::remove_all(staging, ec);
    if (!fs::create_directory(staging, ec) || ec)
      throw InputError("cannot write '" + path + "': cannot make a folder beside it" +
                       (ec ? ": " + ec.message() : std::string()));
    it = staging_.emplace(folder, staging).first;
  }
  return (it->second / p.filename()).string();
}

std::vector<std::string> StagedFiles::commit() {
  std::vector<std::string> placed;
  for (const auto& [folder, staging] : staging_) {
    for (const auto& entry : fs::directory_iterator(staging)) {
      const fs::path to = folder / entry.path().filename();
      std::error_code ec;
      fs::rename(entry.path(), to, ec);
      if (ec) throw InputError("cannot write '" + to.string() + "': " + ec.message());
      placed.push_back(to.string());
    }
    std::error_code ec;
    fs::remove_all(staging, ec);
  }
  committed_ = true;
  std::sort(placed.begin(), placed.end());
  return placed;
}

}  // namespace hearthray::cli
