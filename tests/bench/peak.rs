//! The benchmark process's peak resident memory (VmHWM of /proc/self/status), printed
//! after divan's table by the benches that quote memory.

/// Prints the peak resident memory of this process, when the system reports it.
pub fn print_peak_memory() {
    if let Ok(status) = std::fs::read_to_string("/proc/self/status")
        && let Some(line) = status.lines().find(|l| l.starts_with("VmHWM"))
    {
        println!(
            "peak resident memory of the benchmark process: {}",
            line.trim_start_matches("VmHWM:").trim()
        );
    }
}
