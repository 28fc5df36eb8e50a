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

declare module 'geodesy/utm.js' {
  export class LatLon {
    constructor(lat: number, lon: number, height?: number);
    lat: number;
    lon: number;
    toUtm(zoneOverride?: number): Utm;
  }
  export default class Utm {
    constructor(zone: number, hemisphere: 'N' | 'S', easting: number, northing: number);
    zone: number;
    hemisphere: 'N' | 'S';
    easting: number;
    northing: number;
    toLatLon(): LatLon;
  }
}
