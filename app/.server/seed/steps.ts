// Importing this registers every feature's demo step with seedDemo(), in order.
import "./equipment";
import "./calibrations-bookings";
import "./runs";
