import { Equipment } from "../db";
import { addDemoStep } from "./demo";

type Row = Partial<import("sequelize").InferCreationAttributes<Equipment>> & Pick<Equipment, "kind" | "name">;
/** The invented lab's equipment. */
export const demoEquipment: Row[] = [
  {
    kind: "table",
    name: "Table A (east bench)",
    location: "Room 114",
    maker: "Northgate Instruments",
    model: "RT-60",
    diameterM: 0.6,
    maxRateRpm: 30,
    flatTable: false,
    rateTolerancePct: 1,
  },
  {
    kind: "table",
    name: "Table B (west bench)",
    location: "Room 114",
    maker: "Northgate Instruments",
    model: "RT-100",
    diameterM: 1.0,
    maxRateRpm: 20,
    flatTable: false,
    rateTolerancePct: 1,
  },
  {
    kind: "table",
    name: "Table C (spare)",
    location: "Store 2",
    status: "out_of_service",
    diameterM: 0.5,
    maxRateRpm: 40,
    flatTable: true,
    rateTolerancePct: 1,
    notes: "Drive belt slipping above 10 rpm; waiting for a new belt.",
  },
  { kind: "tank", name: "Acrylic tank 40", location: "Room 114", diameterM: 0.4, depthM: 0.2 },
  { kind: "tank", name: "Acrylic tank 57", location: "Room 114", diameterM: 0.57, depthM: 0.25 },
  { kind: "tank", name: "Wide tank 90", location: "Room 114", diameterM: 0.9, depthM: 0.3 },
  {
    kind: "camera",
    name: "Overhead camera 1",
    location: "Table A mast",
    maker: "Lumera",
    model: "LX-720",
    resolutionWidthPx: 1280,
    resolutionHeightPx: 720,
    nominalFrameRateFps: 30,
    scaleTolerancePct: 1,
  },
  {
    kind: "camera",
    name: "Overhead camera 2",
    location: "Table B mast",
    maker: "Lumera",
    model: "LX-1080",
    resolutionWidthPx: 1920,
    resolutionHeightPx: 1080,
    nominalFrameRateFps: 60,
    scaleTolerancePct: 1,
  },
  { kind: "camera", name: "Old bench camera", status: "retired", resolutionWidthPx: 640, resolutionHeightPx: 480, nominalFrameRateFps: 25 },
  { kind: "rate_meter", name: "Optical tachometer T1", meterType: "tachometer", maker: "Quillon", model: "OT-5" },
  { kind: "rate_meter", name: "Photogate PG-2", meterType: "photogate" },
];

addDemoStep({
  name: "equipment",
  order: 1,
  async run() {
    for (const row of demoEquipment) await Equipment.create(row);
  },
});
