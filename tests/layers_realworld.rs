//! Layer identity of every file in the real-world corpus (`../shared/realworld`).
//!
//! Expected values were determined by a person reading each file name and, where the name
//! is unclear, the file itself: its X2 `.FileFunction` attribute (Gerber spec rev 2024.05
//! §5.6.3), its `%LN`/`%IN`/`G04` layer comments, or its Excellon header (M48). Inner
//! layers of the two four-layer boards (12: `.G1`/`.G2`, 13: `.GP1`/`.GP2`, whose files state
//! `Layer_Physical_Order=2`/`3`) are inner 1 and 2.
//!
//! Columns: file, identity from the file name alone, identity from [`identify`] (attributes
//! scanned from the content > file name > content hints). "-" means not a layer / unknown.

use std::collections::BTreeMap;
use std::path::PathBuf;
use umbra::layers::{self, LayerFunction, LayerId, Side};

fn corpus() -> Option<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/realworld");
    if dir.is_dir() {
        Some(dir)
    } else if std::env::var("CI").as_deref() == Ok("true") {
        panic!("the real-world corpus {} is missing", dir.display());
    } else {
        eprintln!("skipping: no real-world corpus at {}", dir.display());
        None
    }
}

/// "Copper Top", "Copper Inner(2)", "Outline", "Drill plated", "Drill npth", "-".
fn key(id: Option<LayerId>) -> String {
    let Some(id) = id else { return "-".into() };
    let mut s = format!("{:?}", id.function);
    match id.side {
        Side::Both | Side::NotApplicable => {}
        side => s.push_str(&format!(" {side:?}")),
    }
    if id.function == LayerFunction::Drill {
        match id.plated {
            Some(true) => s.push_str(" plated"),
            Some(false) => s.push_str(" npth"),
            None => {}
        }
    }
    s
}

#[rustfmt::skip]
const TABLE: &[(&str, &str, &str)] = &[
    ("01-gps-logger-2layer/LICENSE", "-", "-"),
    ("01-gps-logger-2layer/copper_bottom.gbr", "Copper Bottom", "Copper Bottom"),
    ("01-gps-logger-2layer/copper_top.gbr", "Copper Top", "Copper Top"),
    ("01-gps-logger-2layer/drills.xln", "Drill", "Drill"),
    ("01-gps-logger-2layer/gerber_job.gbrjob", "-", "-"),
    ("01-gps-logger-2layer/profile.gbr", "Outline", "Outline"),
    ("01-gps-logger-2layer/silkscreen_bottom.gbr", "Legend Bottom", "Legend Bottom"),
    ("01-gps-logger-2layer/silkscreen_top.gbr", "Legend Top", "Legend Top"),
    ("01-gps-logger-2layer/soldermask_bottom.gbr", "SolderMask Bottom", "SolderMask Bottom"),
    ("01-gps-logger-2layer/soldermask_top.gbr", "SolderMask Top", "SolderMask Top"),
    ("01-gps-logger-2layer/solderpaste_bottom.gbr", "Paste Bottom", "Paste Bottom"),
    ("01-gps-logger-2layer/solderpaste_top.gbr", "Paste Top", "Paste Top"),
    ("02-temp-humidity-sensor-2layer/LICENSE", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bcream.ger", "Paste Bottom", "Paste Bottom"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bcream.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.boardoutline.ger", "Outline", "Outline"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.boardoutline.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bottomlayer.ger", "Copper Bottom", "Copper Bottom"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bottomlayer.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bottomsilkscreen.ger", "Legend Bottom", "Legend Bottom"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bottomsilkscreen.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bottomsoldermask.ger", "SolderMask Bottom", "SolderMask Bottom"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.bottomsoldermask.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.drills.dri", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.drills.xln", "Drill", "Drill"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.tcream.ger", "Paste Top", "Paste Top"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.tcream.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.toplayer.ger", "Copper Top", "Copper Top"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.toplayer.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.topsilkscreen.ger", "Legend Top", "Legend Top"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.topsilkscreen.gpi", "-", "-"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.topsoldermask.ger", "SolderMask Top", "SolderMask Top"),
    ("02-temp-humidity-sensor-2layer/emonTH V2.0.2.topsoldermask.gpi", "-", "-"),
    ("03-organ-pedal-sensor-strip-970mm/GPL.txt", "-", "-"),
    ("03-organ-pedal-sensor-strip-970mm/README.txt", "-", "-"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.cmp", "Copper Top", "Copper Top"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.dim", "Outline", "Outline"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.drd", "Drill", "Drill"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.dri", "-", "-"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.gpi", "-", "-"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.sol", "Copper Bottom", "Copper Bottom"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.stc", "SolderMask Top", "SolderMask Top"),
    ("03-organ-pedal-sensor-strip-970mm/pedalier.sts", "SolderMask Bottom", "SolderMask Bottom"),
    ("04-nixie-hv-supply-2layer/LICENSE", "-", "-"),
    ("04-nixie-hv-supply-2layer/Through.drl", "Drill", "Drill"),
    // "Board" alone says nothing; the file states .FileFunction,Drawing,Board polygon.
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.Board.gbr", "-", "Mechanical"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.BoardOutline.gbr", "Outline", "Outline"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.Bottom.gbr", "Copper Bottom", "Copper Bottom"),
    // The name says assembly; the file's own attribute says Drawing,Bot (attributes win).
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.BottomAssy.gbr", "Assembly Bottom", "Mechanical Bottom"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.BottomDimension.gbr", "Mechanical Bottom", "Mechanical Bottom"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.BottomMask.gbr", "SolderMask Bottom", "SolderMask Bottom"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.BottomPaste.gbr", "Paste Bottom", "Paste Bottom"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.BottomSilk.gbr", "Legend Bottom", "Legend Bottom"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.Top.gbr", "Copper Top", "Copper Top"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.TopAssy.gbr", "Assembly Top", "Mechanical Top"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.TopDimension.gbr", "Mechanical Top", "Mechanical Top"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.TopMask.gbr", "SolderMask Top", "SolderMask Top"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.TopPaste.gbr", "Paste Top", "Paste Top"),
    ("04-nixie-hv-supply-2layer/lt3757_nixie_power_supply.TopSilk.gbr", "Legend Top", "Legend Top"),
    ("05-keyboard-converter-v1-2layer/BoardOutline.gbr", "Outline", "Outline"),
    ("05-keyboard-converter-v1-2layer/Bottom.gbr", "Copper Bottom", "Copper Bottom"),
    ("05-keyboard-converter-v1-2layer/BottomMask.gbr", "SolderMask Bottom", "SolderMask Bottom"),
    ("05-keyboard-converter-v1-2layer/BottomPaste.gbr", "Paste Bottom", "Paste Bottom"),
    ("05-keyboard-converter-v1-2layer/LICENSE.md", "-", "-"),
    ("05-keyboard-converter-v1-2layer/Through.drl", "Drill", "Drill"),
    ("05-keyboard-converter-v1-2layer/Top.gbr", "Copper Top", "Copper Top"),
    ("05-keyboard-converter-v1-2layer/TopMask.gbr", "SolderMask Top", "SolderMask Top"),
    ("05-keyboard-converter-v1-2layer/TopPaste.gbr", "Paste Top", "Paste Top"),
    ("05-keyboard-converter-v1-2layer/TopSilk.gbr", "Legend Top", "Legend Top"),
    ("06-keyboard-converter-v2-2layer/LICENSE.md", "-", "-"),
    ("06-keyboard-converter-v2-2layer/at2xt-B_Cu.gbl", "Copper Bottom", "Copper Bottom"),
    ("06-keyboard-converter-v2-2layer/at2xt-B_Mask.gbs", "SolderMask Bottom", "SolderMask Bottom"),
    ("06-keyboard-converter-v2-2layer/at2xt-B_Paste.gbp", "Paste Bottom", "Paste Bottom"),
    ("06-keyboard-converter-v2-2layer/at2xt-B_Silkscreen.gbo", "Legend Bottom", "Legend Bottom"),
    ("06-keyboard-converter-v2-2layer/at2xt-Edge_Cuts.gm1", "Outline", "Outline"),
    ("06-keyboard-converter-v2-2layer/at2xt-F_Cu.gtl", "Copper Top", "Copper Top"),
    ("06-keyboard-converter-v2-2layer/at2xt-F_Mask.gts", "SolderMask Top", "SolderMask Top"),
    ("06-keyboard-converter-v2-2layer/at2xt-F_Paste.gtp", "Paste Top", "Paste Top"),
    ("06-keyboard-converter-v2-2layer/at2xt-F_Silkscreen.gto", "Legend Top", "Legend Top"),
    // One drill file for both kinds: ".FileFunction,MixedPlating,1,2".
    ("06-keyboard-converter-v2-2layer/at2xt.drl", "Drill", "Drill"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-B.Cu.gbr", "Copper Bottom", "Copper Bottom"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-B.Mask.gbr", "SolderMask Bottom", "SolderMask Bottom"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-B.Paste.gbr", "Paste Bottom", "Paste Bottom"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-B.SilkS.gbr", "Legend Bottom", "Legend Bottom"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-Edge.Cuts.gbr", "Outline", "Outline"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-F.Cu.gbr", "Copper Top", "Copper Top"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-F.Mask.gbr", "SolderMask Top", "SolderMask Top"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-F.Paste.gbr", "Paste Top", "Paste Top"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-F.SilkS.gbr", "Legend Top", "Legend Top"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-NPTH.drl", "Drill npth", "Drill npth"),
    ("07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-PTH.drl", "Drill plated", "Drill plated"),
    ("07-esp32-ethernet-gateway-2layer/LICENSE", "-", "-"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-B_Cu.gbr", "Copper Bottom", "Copper Bottom"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-B_Mask.gbr", "SolderMask Bottom", "SolderMask Bottom"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-B_SilkS.gbr", "Legend Bottom", "Legend Bottom"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-Edge_Cuts.gbr", "Outline", "Outline"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-F_Cu.gbr", "Copper Top", "Copper Top"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-F_Mask.gbr", "SolderMask Top", "SolderMask Top"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-F_SilkS.gbr", "Legend Top", "Legend Top"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-NPTH.drl", "Drill npth", "Drill npth"),
    ("08-music-box-badge-2layer/FOSDEM-MUSIC-BOX_RevA-PTH.drl", "Drill plated", "Drill plated"),
    ("08-music-box-badge-2layer/README.md", "-", "-"),
    ("09-riscv-retro-computer-2layer/LICENSE", "-", "-"),
    ("09-riscv-retro-computer-2layer/README.md", "-", "-"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-B_Cu.gbr", "Copper Bottom", "Copper Bottom"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-B_Mask.gbr", "SolderMask Bottom", "SolderMask Bottom"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-B_Paste.gbr", "Paste Bottom", "Paste Bottom"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-B_Silkscreen.gbr", "Legend Bottom", "Legend Bottom"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-Edge_Cuts.gbr", "Outline", "Outline"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-F_Cu.gbr", "Copper Top", "Copper Top"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-F_Mask.gbr", "SolderMask Top", "SolderMask Top"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-F_Paste.gbr", "Paste Top", "Paste Top"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-F_Silkscreen.gbr", "Legend Top", "Legend Top"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-NPTH.drl", "Drill npth", "Drill npth"),
    ("09-riscv-retro-computer-2layer/RVPC_Rev_B-PTH.drl", "Drill plated", "Drill plated"),
    ("10-usb-pd-power-tap-2layer/LICENCE", "-", "-"),
    ("10-usb-pd-power-tap-2layer/power-pcb-B_Cu.gbl", "Copper Bottom", "Copper Bottom"),
    ("10-usb-pd-power-tap-2layer/power-pcb-B_Mask.gbs", "SolderMask Bottom", "SolderMask Bottom"),
    ("10-usb-pd-power-tap-2layer/power-pcb-B_Paste.gbp", "Paste Bottom", "Paste Bottom"),
    ("10-usb-pd-power-tap-2layer/power-pcb-B_Silkscreen.gbo", "Legend Bottom", "Legend Bottom"),
    ("10-usb-pd-power-tap-2layer/power-pcb-Edge_Cuts.gm1", "Outline", "Outline"),
    ("10-usb-pd-power-tap-2layer/power-pcb-F_Cu.gtl", "Copper Top", "Copper Top"),
    ("10-usb-pd-power-tap-2layer/power-pcb-F_Mask.gts", "SolderMask Top", "SolderMask Top"),
    ("10-usb-pd-power-tap-2layer/power-pcb-F_Paste.gtp", "Paste Top", "Paste Top"),
    ("10-usb-pd-power-tap-2layer/power-pcb-F_Silkscreen.gto", "Legend Top", "Legend Top"),
    ("10-usb-pd-power-tap-2layer/power-pcb-job.gbrjob", "-", "-"),
    ("11-rtc-breakout-2layer/Gerber_BoardOutline.GKO", "Outline", "Outline"),
    ("11-rtc-breakout-2layer/Gerber_BottomLayer.GBL", "Copper Bottom", "Copper Bottom"),
    ("11-rtc-breakout-2layer/Gerber_BottomSolderMaskLayer.GBS", "SolderMask Bottom", "SolderMask Bottom"),
    ("11-rtc-breakout-2layer/Gerber_Drill_PTH.DRL", "Drill plated", "Drill plated"),
    ("11-rtc-breakout-2layer/Gerber_TopLayer.GTL", "Copper Top", "Copper Top"),
    ("11-rtc-breakout-2layer/Gerber_TopPasteMaskLayer.GTP", "Paste Top", "Paste Top"),
    ("11-rtc-breakout-2layer/Gerber_TopSilkLayer.GTO", "Legend Top", "Legend Top"),
    ("11-rtc-breakout-2layer/Gerber_TopSolderMaskLayer.GTS", "SolderMask Top", "SolderMask Top"),
    ("11-rtc-breakout-2layer/LICENSE.md", "-", "-"),
    ("12-bldc-motor-driver-4layer/Drill_NPTH_Through.DRL", "Drill npth", "Drill npth"),
    ("12-bldc-motor-driver-4layer/Drill_PTH_Through.DRL", "Drill plated", "Drill plated"),
    ("12-bldc-motor-driver-4layer/Drill_PTH_Through_Via.DRL", "Drill plated", "Drill plated"),
    ("12-bldc-motor-driver-4layer/Gerber_BoardOutlineLayer.GKO", "Outline", "Outline"),
    ("12-bldc-motor-driver-4layer/Gerber_BottomLayer.GBL", "Copper Bottom", "Copper Bottom"),
    ("12-bldc-motor-driver-4layer/Gerber_BottomPasteMaskLayer.GBP", "Paste Bottom", "Paste Bottom"),
    ("12-bldc-motor-driver-4layer/Gerber_BottomSilkscreenLayer.GBO", "Legend Bottom", "Legend Bottom"),
    ("12-bldc-motor-driver-4layer/Gerber_BottomSolderMaskLayer.GBS", "SolderMask Bottom", "SolderMask Bottom"),
    ("12-bldc-motor-driver-4layer/Gerber_DocumentLayer.GDL", "Mechanical", "Mechanical"),
    ("12-bldc-motor-driver-4layer/Gerber_DrillDrawingLayer.GDD", "DrillMap", "DrillMap"),
    ("12-bldc-motor-driver-4layer/Gerber_InnerLayer1.G1", "Copper Inner(1)", "Copper Inner(1)"),
    ("12-bldc-motor-driver-4layer/Gerber_InnerLayer2.G2", "Copper Inner(2)", "Copper Inner(2)"),
    ("12-bldc-motor-driver-4layer/Gerber_TopLayer.GTL", "Copper Top", "Copper Top"),
    ("12-bldc-motor-driver-4layer/Gerber_TopPasteMaskLayer.GTP", "Paste Top", "Paste Top"),
    ("12-bldc-motor-driver-4layer/Gerber_TopSilkscreenLayer.GTO", "Legend Top", "Legend Top"),
    ("12-bldc-motor-driver-4layer/Gerber_TopSolderMaskLayer.GTS", "SolderMask Top", "SolderMask Top"),
    ("12-bldc-motor-driver-4layer/LICENSE", "-", "-"),
    ("13-pump-controller-4layer/LICENSE.txt", "-", "-"),
    ("13-pump-controller-4layer/PCB-RoundHoles.TXT", "Drill", "Drill"),
    ("13-pump-controller-4layer/PCB-SlotHoles.TXT", "Drill", "Drill"),
    ("13-pump-controller-4layer/PCB.GBL", "Copper Bottom", "Copper Bottom"),
    ("13-pump-controller-4layer/PCB.GBO", "Legend Bottom", "Legend Bottom"),
    ("13-pump-controller-4layer/PCB.GBP", "Paste Bottom", "Paste Bottom"),
    ("13-pump-controller-4layer/PCB.GBS", "SolderMask Bottom", "SolderMask Bottom"),
    // A bare rectangle from (0,0) to (122.4,101.6) mm: the board edge.
    ("13-pump-controller-4layer/PCB.GM", "Outline", "Outline"),
    ("13-pump-controller-4layer/PCB.GP1", "Copper Inner(1)", "Copper Inner(1)"),
    ("13-pump-controller-4layer/PCB.GP2", "Copper Inner(2)", "Copper Inner(2)"),
    ("13-pump-controller-4layer/PCB.GTL", "Copper Top", "Copper Top"),
    ("13-pump-controller-4layer/PCB.GTO", "Legend Top", "Legend Top"),
    ("13-pump-controller-4layer/PCB.GTP", "Paste Top", "Paste Top"),
    ("13-pump-controller-4layer/PCB.GTS", "SolderMask Top", "SolderMask Top"),
    ("14-retro-chip-adapter-2layer/LICENSE.md", "-", "-"),
    ("14-retro-chip-adapter-2layer/PCB1.GBL", "Copper Bottom", "Copper Bottom"),
    ("14-retro-chip-adapter-2layer/PCB1.GBO", "Legend Bottom", "Legend Bottom"),
    ("14-retro-chip-adapter-2layer/PCB1.GBP", "Paste Bottom", "Paste Bottom"),
    ("14-retro-chip-adapter-2layer/PCB1.GBS", "SolderMask Bottom", "SolderMask Bottom"),
    ("14-retro-chip-adapter-2layer/PCB1.GTL", "Copper Top", "Copper Top"),
    ("14-retro-chip-adapter-2layer/PCB1.GTO", "Legend Top", "Legend Top"),
    ("14-retro-chip-adapter-2layer/PCB1.GTP", "Paste Top", "Paste Top"),
    ("14-retro-chip-adapter-2layer/PCB1.GTS", "SolderMask Top", "SolderMask Top"),
    ("14-retro-chip-adapter-2layer/PCB1.Outline", "Outline", "Outline"),
    // ".TXT" alone says nothing; the content is an Excellon program (M48).
    ("14-retro-chip-adapter-2layer/PCB1.TXT", "-", "Drill"),
    ("15-christmas-light-controller-2layer/LICENSE", "-", "-"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GBL", "Copper Bottom", "Copper Bottom"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GBO", "Legend Bottom", "Legend Bottom"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GBS", "SolderMask Bottom", "SolderMask Bottom"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GML", "Outline", "Outline"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GTL", "Copper Top", "Copper Top"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GTO", "Legend Top", "Legend Top"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GTS", "SolderMask Top", "SolderMask Top"),
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.TXT", "-", "Drill"),
    ("16-reflow-oven-controller-2layer/License.md", "-", "-"),
    ("16-reflow-oven-controller-2layer/project.bottom.gbr", "Copper Bottom", "Copper Bottom"),
    ("16-reflow-oven-controller-2layer/project.bottommask.gbr", "SolderMask Bottom", "SolderMask Bottom"),
    ("16-reflow-oven-controller-2layer/project.fab.gbr", "Mechanical", "Mechanical"),
    ("16-reflow-oven-controller-2layer/project.plated-drill.cnc", "Drill plated", "Drill plated"),
    ("16-reflow-oven-controller-2layer/project.top.gbr", "Copper Top", "Copper Top"),
    ("16-reflow-oven-controller-2layer/project.topmask.gbr", "SolderMask Top", "SolderMask Top"),
    ("16-reflow-oven-controller-2layer/project.topsilk.gbr", "Legend Top", "Legend Top"),
    ("17-oscilloscope-single-sided/bottom_copper.grb", "Copper Bottom", "Copper Bottom"),
    ("17-oscilloscope-single-sided/cc-by-sa-30.txt", "-", "-"),
    ("17-oscilloscope-single-sided/readme.txt", "-", "-"),
    ("18-esp32-wordclock-carrier-2layer/LICENSE", "-", "-"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_contour.gm1", "Outline", "Outline"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_copperBottom.gbl", "Copper Bottom", "Copper Bottom"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_copperTop.gtl", "Copper Top", "Copper Top"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_drill.txt", "Drill", "Drill"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_maskBottom.gbs", "SolderMask Bottom", "SolderMask Bottom"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_maskTop.gts", "SolderMask Top", "SolderMask Top"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_silkBottom.gbo", "Legend Bottom", "Legend Bottom"),
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_silkTop.gto", "Legend Top", "Legend Top"),
    ("19-smart-planter-driver-2layer/BOTTOM.art", "Copper Bottom", "Copper Bottom"),
    ("19-smart-planter-driver-2layer/DRILL_LEGEND.art", "DrillMap", "DrillMap"),
    ("19-smart-planter-driver-2layer/LICENSE", "-", "-"),
    ("19-smart-planter-driver-2layer/OUTLINE.art", "Outline", "Outline"),
    ("19-smart-planter-driver-2layer/SILKSCREEN_BOTTOM.art", "Legend Bottom", "Legend Bottom"),
    ("19-smart-planter-driver-2layer/SILKSCREEN_TOP.art", "Legend Top", "Legend Top"),
    ("19-smart-planter-driver-2layer/SOLDERMASK_BOTTOM.art", "SolderMask Bottom", "SolderMask Bottom"),
    ("19-smart-planter-driver-2layer/SOLDERMASK_TOP.art", "SolderMask Top", "SolderMask Top"),
    ("19-smart-planter-driver-2layer/TOP.art", "Copper Top", "Copper Top"),
    ("19-smart-planter-driver-2layer/VitaBoard-1-2.drl", "Drill", "Drill"),
    ("19-smart-planter-driver-2layer/art_param.txt", "-", "-"),
    ("19-smart-planter-driver-2layer/nc_param.txt", "-", "-"),
    ("19-smart-planter-driver-2layer/nc_tools_auto.txt", "-", "-"),
    ("20-micromouse-shield-2layer/BOTTOM.art", "Copper Bottom", "Copper Bottom"),
    ("20-micromouse-shield-2layer/LICENSE", "-", "-"),
    ("20-micromouse-shield-2layer/MICROMOUSE_SHIELD-1-2.drl", "Drill", "Drill"),
    ("20-micromouse-shield-2layer/OUTLINE.art", "Outline", "Outline"),
    ("20-micromouse-shield-2layer/SOLDERMASK_BOTTOM.art", "SolderMask Bottom", "SolderMask Bottom"),
    ("20-micromouse-shield-2layer/SOLDERMASK_TOP.art", "SolderMask Top", "SolderMask Top"),
    ("20-micromouse-shield-2layer/TOP.art", "Copper Top", "Copper Top"),
    ("21-fridge-buzzer-panel-2up/README.md", "-", "-"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gbl", "Copper Bottom", "Copper Bottom"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gbo", "Legend Bottom", "Legend Bottom"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gbp", "Paste Bottom", "Paste Bottom"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gbs", "SolderMask Bottom", "SolderMask Bottom"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gko", "Outline", "Outline"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gtl", "Copper Top", "Copper Top"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gto", "Legend Top", "Legend Top"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gtp", "Paste Top", "Paste Top"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.gts", "SolderMask Top", "SolderMask Top"),
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.txt", "-", "Drill"),
];

/// What the content alone says, for files whose content names the layer (`%IN`, `%LN`,
/// `G04 Layer:`, `G04 Title:`, `G04 Film Name:`, Excellon `M48`), read off each file.
#[rustfmt::skip]
const CONTENT_TABLE: &[(&str, &str)] = &[
    ("01-gps-logger-2layer/copper_top.gbr", "Copper Top"),               // %INTop Copper*%
    ("01-gps-logger-2layer/silkscreen_bottom.gbr", "Legend Bottom"),     // %INSilkscreen Bottom*%
    ("01-gps-logger-2layer/drills.xln", "Drill"),                        // M48
    ("05-keyboard-converter-v1-2layer/BottomMask.gbr", "SolderMask Bottom"), // %INBottomMask.gbr*%
    ("05-keyboard-converter-v1-2layer/Top.gbr", "Copper Top"),           // %INTop.gbr*%
    ("11-rtc-breakout-2layer/Gerber_TopSolderMaskLayer.GTS", "SolderMask Top"), // G04 Layer: TopSolderMaskLayer
    ("12-bldc-motor-driver-4layer/Gerber_InnerLayer2.G2", "Copper Inner(2)"),   // G04 Layer: InnerLayer2
    ("12-bldc-motor-driver-4layer/Gerber_DrillDrawingLayer.GDD", "DrillMap"),   // G04 Layer: DrillDrawingLayer
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GBL", "Copper Bottom"), // Title: (unknown), bottom_copper
    ("15-christmas-light-controller-2layer/vk5hse-christmas-lights-v1-0.GML", "Outline"),       // Title: (unknown), global_outline
    ("16-reflow-oven-controller-2layer/project.topmask.gbr", "SolderMask Top"), // Title: …, componentmask
    ("17-oscilloscope-single-sided/bottom_copper.grb", "Copper Bottom"),  // %LN bottom copper *%
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_copperTop.gtl", "Copper Top"),     // %LNCOPPER1*%
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_maskBottom.gbs", "SolderMask Bottom"), // %LNMASK0*%
    ("18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_contour.gm1", "Outline"),          // %LNCONTOUR*%
    ("19-smart-planter-driver-2layer/SOLDERMASK_TOP.art", "SolderMask Top"), // G04 Film Name: SOLDERMASK_TOP
    ("20-micromouse-shield-2layer/OUTLINE.art", "Outline"),               // G04 Film Name: outline
    ("20-micromouse-shield-2layer/BOTTOM.art", "Copper Bottom"),          // G04 Film Name: BOTTOM
    ("21-fridge-buzzer-panel-2up/fridge-buzzer-panel.txt", "Drill"),      // M48
    ("03-organ-pedal-sensor-strip-970mm/pedalier.cmp", "-"),             // no hints at all
];

fn read(dir: &std::path::Path, rel: &str) -> String {
    let bytes = std::fs::read(dir.join(rel)).unwrap_or_else(|e| panic!("{rel}: {e}"));
    String::from_utf8_lossy(&bytes).into_owned()
}

#[test]
fn the_table_covers_every_file_of_the_corpus() {
    let Some(dir) = corpus() else { return };
    let mut on_disk = Vec::new();
    for board in std::fs::read_dir(&dir).unwrap() {
        let board = board.unwrap().path();
        if !board.is_dir() {
            continue;
        }
        for f in std::fs::read_dir(&board).unwrap() {
            let f = f.unwrap().path();
            let rel = f
                .strip_prefix(&dir)
                .unwrap()
                .to_string_lossy()
                .replace('\\', "/");
            on_disk.push(rel);
        }
    }
    on_disk.sort();
    let mut listed: Vec<String> = TABLE.iter().map(|r| r.0.to_string()).collect();
    listed.sort();
    assert_eq!(on_disk, listed, "the corpus and the table differ");
}

#[test]
fn every_real_file_name_gives_the_expected_layer() {
    if corpus().is_none() {
        return;
    }
    let mut wrong = Vec::new();
    for (rel, by_name, _) in TABLE {
        let name = rel.rsplit('/').next().unwrap();
        let got = key(layers::from_file_name(name));
        if got != *by_name {
            wrong.push(format!("{rel}: file name gives {got}, expected {by_name}"));
        }
    }
    assert!(wrong.is_empty(), "\n{}", wrong.join("\n"));
}

#[test]
fn every_real_file_is_identified_with_attributes_name_and_content() {
    let Some(dir) = corpus() else { return };
    let mut wrong = Vec::new();
    let none = BTreeMap::new();
    for (rel, _, expected) in TABLE {
        let text = read(&dir, rel);
        let got = key(layers::identify(rel, &none, &text));
        if got != *expected {
            wrong.push(format!("{rel}: identify gives {got}, expected {expected}"));
        }
    }
    assert!(wrong.is_empty(), "\n{}", wrong.join("\n"));
}

#[test]
fn content_hints_name_the_layer() {
    let Some(dir) = corpus() else { return };
    let mut wrong = Vec::new();
    for (rel, expected) in CONTENT_TABLE {
        let got = key(layers::from_content(&read(&dir, rel)));
        if got != *expected {
            wrong.push(format!("{rel}: content gives {got}, expected {expected}"));
        }
    }
    assert!(wrong.is_empty(), "\n{}", wrong.join("\n"));
}

#[test]
fn x2_attributes_win_and_carry_polarity() {
    let Some(dir) = corpus() else { return };
    // G04 #@! TF.FileFunction,Soldermask,Bot* and TF.FilePolarity,Negative* in the file.
    let rel = "06-keyboard-converter-v2-2layer/at2xt-B_Mask.gbs";
    let id = layers::identify(rel, &BTreeMap::new(), &read(&dir, rel)).unwrap();
    assert_eq!(id.source, layers::IdSource::Attribute);
    assert_eq!(id.polarity, Some(layers::FilePolarity::Negative));
    // Altium writes only .FilePolarity: the name gives the function, the file the polarity.
    let rel = "13-pump-controller-4layer/PCB.GP1";
    let id = layers::identify(rel, &BTreeMap::new(), &read(&dir, rel)).unwrap();
    assert_eq!(id.source, layers::IdSource::FileName);
    assert_eq!(id.polarity, Some(layers::FilePolarity::Negative));
    assert_eq!(id.copper_layer, Some(2));
}

#[test]
fn the_real_job_file_lists_nine_files() {
    let Some(dir) = corpus() else { return };
    let job = layers::parse_job_file(&read(
        &dir,
        "10-usb-pd-power-tap-2layer/power-pcb-job.gbrjob",
    ))
    .unwrap();
    // Values read off the job file itself.
    assert_eq!(job.project.as_deref(), Some("power-pcb"));
    assert_eq!(job.size_mm, Some((26.124, 22.766)));
    assert_eq!(job.copper_layers, Some(2));
    assert_eq!(job.files.len(), 9);
    let get = |p: &str| job.files.iter().find(|(n, _)| n == p).map(|(_, id)| *id);
    // "SolderMask,Top" / "SolderPaste,Bot" spelled so in this job file.
    assert_eq!(key(get("power-pcb-F_Mask.gts")), "SolderMask Top");
    assert_eq!(key(get("power-pcb-B_Paste.gbp")), "Paste Bottom");
    assert_eq!(key(get("power-pcb-B_Cu.gbl")), "Copper Bottom");
    assert_eq!(key(get("power-pcb-Edge_Cuts.gm1")), "Outline");
    assert_eq!(
        get("power-pcb-F_Mask.gts").unwrap().polarity,
        Some(layers::FilePolarity::Negative)
    );
    // The older job file of board 01 has no file list.
    let old =
        layers::parse_job_file(&read(&dir, "01-gps-logger-2layer/gerber_job.gbrjob")).unwrap();
    assert_eq!(old.project.as_deref(), Some("snappergps_1_0_0"));
    assert!(old.files.is_empty());
}
