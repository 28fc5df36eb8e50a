// Minimal declarations for the parts of the `geodesy` package wakeplane uses (the package ships no types).
declare module 'geodesy/latlon-ellipsoidal.js' {
  export class Cartesian {
    constructor(x: number, y: number, z: number);
    x: number;
    y: number;
    z: number;
    toLatLon(): LatLonEllipsoidal;
  }
  export default class LatLonEllipsoidal {
    constructor(lat: number, lon: number, height?: number);
    lat: number;
    lon: number;
    height: number;
    toCartesian(): Cartesian;
  }
}
