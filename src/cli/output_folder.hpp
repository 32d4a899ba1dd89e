// Output folders that are never half-written. A command writing a folder (solve -o DIR,
// comfort -o DIR, compare -o DIR, fire -o DIR) writes into a fresh hidden sibling,
// ".DIR.hearthray-partial-PID" (same parent, so one file system), writes its manifest
// report.json last (naming the files of its run), and swaps the sibling in for DIR in one
// step (Linux renameat2 RENAME_EXCHANGE) before removing the previous run's files. A reader
// sees the previous complete folder or the new complete one, never a mix: a folder is complete
// when it holds report.json, and every file report.json names is there.
//
// Leftovers of a killed run (".DIR.hearthray-partial-PID", ".DIR.hearthray-old-PID" whose
// process is gone) are hidden, never results, and removed by the next run writing DIR.
//
// Safety: DIR is replaced whole, so it must be new, empty, or a previous hearthray run's
// folder (its report.json names every file in it); anything else (a folder holding files of
// the user's, the current folder) is refused as bad input before any work is done.
#pragma once

#include <filesystem>
#include <functional>
#include <iosfwd>
#include <map>
#include <nlohmann/json_fwd.hpp>
#include <string>
#include <vector>

namespace hearthray::cli {

// The manifest every output folder holds, written last.
inline constexpr const char* kManifestName = "report.json";

// Throws InputError when `dir` may not be (re)written as an output folder (see above). Cheap:
// commands call it before the work, and OutputFolder again when it puts the folder in place.
void check_output_folder(const std::string& dir);

// A manifest for commands with no report of their own (comfort, compare): the tool, its
// version, the command, its scenes and the files.
nlohmann::json folder_manifest(const std::string& command, const std::vector<std::string>& scenes,
                               const std::vector<std::string>& files);

class OutputFolder {
 public:
  // Checks `dir`, removes leftovers of killed runs beside it and makes the staging folder.
  explicit OutputFolder(const std::string& dir);
  ~OutputFolder();  // removes the staging folder unless committed
  OutputFolder(const OutputFolder&) = delete;
  OutputFolder& operator=(const OutputFolder&) = delete;

  // Where to write the file `name` of the folder now (in the staging folder).
  // Test hook: HEARTHRAY_TEST_EXIT_AFTER_FILES=N ends the process (std::_Exit(9), as a kill
  // would: no clean-up) once N files have been asked for and the next is asked for, or before
  // the swap; HEARTHRAY_TEST_EXIT_AFTER_SWAP (any value) right after the swap.
  std::string file(const std::string& name);
  // The folder being written now (the staging folder), for a writer reading back a file of it.
  const std::filesystem::path& folder() const { return staging_; }
  // The folder as the user named it, for messages.
  const std::string& target() const { return asked_; }
  // Checks that the manifest names exactly the files written (an internal error otherwise),
  // then swaps the folder in.
  void commit();

 private:
  std::string asked_;
  std::filesystem::path target_, staging_;
  std::size_t files_ = 0;
  bool committed_ = false;
};

// Writes the folder's report.json by `write` (last: it names the files of its run) and commits
// `out`; unless `quiet`, then says "wrote DIR/report.json, FILE, ..." with `files`.
void commit_with_report(OutputFolder& out, const std::function<void(std::ostream&)>& write,
                        const std::vector<std::string>& files, bool quiet);

// Writes `manifest` as the folder's report.json (the last file) and commits `out`.
void write_manifest(OutputFolder& out, const nlohmann::json& manifest);

// Several output files anywhere (factors -o A.csv -o B.h5): each written in a hidden staging
// folder beside it (".hearthray-partial-PID" in its folder) and all renamed into place at the
// end, so an interruption while writing leaves none of the new files; each file is whole.
class StagedFiles {
 public:
  StagedFiles() = default;
  ~StagedFiles();  // removes the staging folders unless committed
  StagedFiles(const StagedFiles&) = delete;
  StagedFiles& operator=(const StagedFiles&) = delete;

  // Where to write `path` now; files written beside it (same folder) are staged with it.
  std::string file(const std::string& path);
  // Renames every staged file into its folder. Returns their final paths.
  std::vector<std::string> commit();

 private:
  std::map<std::filesystem::path, std::filesystem::path> staging_;  // folder -> its staging
  bool committed_ = false;
};

}  // namespace hearthray::cli
