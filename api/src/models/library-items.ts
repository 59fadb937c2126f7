import { LibraryItem } from './library-item.ts';

// `data` of each holds the sim-core section named in the API's LIBRARY_KINDS (validated on the way in).
export class Wastegate extends LibraryItem {
  static override tableName = 'wastegates';
}

export class Spring extends LibraryItem {
  static override tableName = 'springs';
}

export class Turbo extends LibraryItem {
  static override tableName = 'turbos';
}

export class Engine extends LibraryItem {
  static override tableName = 'engines';
}

export class Supply extends LibraryItem {
  static override tableName = 'supplies';
}
