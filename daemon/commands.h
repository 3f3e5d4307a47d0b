// The subcommand registry: each command file registers its options and a runner.
#pragma once

#include <CLI/CLI.hpp>

#include <functional>

namespace tonewarden::daemon {

// Exit codes shared by every subcommand.
inline constexpr int kExitOk = 0;
inline constexpr int kExitRuntimeFailure = 1;
inline constexpr int kExitUsage = 2;

void register_commands(CLI::App& app);
// Runs the subcommand that was parsed; returns its exit code.
int run_selected_command(CLI::App& app);

// Each command file provides one of these; commands.cpp lists them.
using CommandRunner = std::function<int()>;
CommandRunner register_run_command(CLI::App& app);
CommandRunner register_analyze_command(CLI::App& app);
CommandRunner register_devices_command(CLI::App& app);
CommandRunner register_query_command(CLI::App& app);
CommandRunner register_check_config_command(CLI::App& app);

}  // namespace tonewarden::daemon
